//! Compare the π tier with the TDA-PBE0 reference computed so far at the same geometries:
//! `cargo run --release --example compare_reference [PARAMS.toml]`. Prints S1, T1, f and the
//! T1 charge-transfer number per molecule (π→π* reference states only, see
//! `tests/support/refset.rs`), then MAE and Spearman ρ, raw and corrected.
#[path = "../tests/support/refset.rs"]
mod refset;

use lumisift::pi::params::PppParams;

fn main() {
    let ppp = match std::env::args().nth(1) {
        Some(path) => PppParams::parse(&std::fs::read_to_string(&path).expect("parameter file"))
            .unwrap_or_else(|e| panic!("{path}: {e}")),
        None => PppParams::default_set(),
    };
    let entries = refset::load();
    let ests = refset::estimates(&entries, &ppp);
    for (label, corrected) in [("raw PPP-CIS", false), ("corrected", true)] {
        let m = refset::metrics(&entries, &ests, corrected);
        println!("\n== {label} ({}) ==", ppp.name);
        println!(
            "{:<32} {:>13} {:>13} {:>15} {:>11}",
            "name", "S1 ours/ref", "T1 ours/ref", "f ours/ref", "T1 CT o/r"
        );
        for r in &m.rows {
            println!(
                "{:<32} {:>6.2}/{:<6.2} {:>6.2}/{:<6.2} {:>7.3}/{:<7.3} {:>5.2}/{:<5.2}",
                r.name, r.s1.0, r.s1.1, r.t1.0, r.t1.1, r.f.0, r.f.1, r.t1_ct.0, r.t1_ct.1
            );
        }
        println!(
            "S1: n={} MAE {:.3} eV ρ {:.2} | T1: n={} MAE {:.3} eV ρ {:.2} | fragment T1: n={} \
             MAE {:.3} eV | ΔEST: n={} MAE {:.3} eV ρ {:.2} | f ρ {:.2} | T1 character agrees \
             {}/{} ({:.0} %)",
            m.n_s1,
            m.s1_mae,
            m.s1_spearman,
            m.n_t1,
            m.t1_mae,
            m.t1_spearman,
            m.n_frag_t1,
            m.frag_t1_mae,
            m.n_dest,
            m.dest_mae,
            m.dest_spearman,
            m.f_spearman,
            m.n_character_agree,
            m.n_character,
            100.0 * m.character_agreement
        );
    }
}
