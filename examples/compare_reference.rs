//! Compare the π tier (uncalibrated) with the TDA-PBE0 reference computed so far at the same
//! geometries: `cargo run --release --example compare_reference`. Prints S1, T1, ΔEST and f per
//! molecule and the mean absolute errors; molecules without a result yet are skipped.
use lumisift::chem::parse_smiles;
use lumisift::pi::estimate::{EstimateParams, estimate};
use lumisift::pi::params::PppParams;

fn main() {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/tddft");
    let list = std::fs::read_to_string(root.join("reference_set.tsv")).expect("reference list");
    let ppp = PppParams::default_set();
    let (mut es1, mut et1, mut ed, mut n) = (0.0, 0.0, 0.0, 0usize);
    println!(
        "{:<34} {:>14} {:>14} {:>14} {:>16}",
        "name", "S1 ours/ref", "T1 ours/ref", "ΔEST ours/ref", "f ours/ref"
    );
    for line in list
        .lines()
        .filter(|l| !l.starts_with('#') && !l.trim().is_empty())
    {
        let f: Vec<&str> = line.split('\t').collect();
        let twists: Vec<Option<f64>> = if f[2].trim() == "-" {
            vec![None]
        } else {
            f[2].split(',').map(|t| t.trim().parse().ok()).collect()
        };
        for t in twists {
            let name = match t {
                Some(t) => format!("{}_{:03}", f[0], t.round() as i64),
                None => f[0].to_string(),
            };
            let Ok(text) =
                std::fs::read_to_string(root.join("results").join(format!("{name}.json")))
            else {
                continue;
            };
            let r: serde_json::Value = serde_json::from_str(&text).expect("result JSON");
            if r.get("error").is_some() {
                continue;
            }
            let m = parse_smiles(f[1]).expect("valid SMILES");
            let p = EstimateParams {
                twist_deg: Some(t.unwrap_or(0.0)),
                ..EstimateParams::default()
            };
            let e = match estimate(&m, &ppp, &p) {
                Ok(e) => e,
                Err(err) => {
                    println!("{name:<34} π tier failed: {err}");
                    continue;
                }
            };
            let rs1 = r["singlets"][0]["energy_ev"].as_f64().unwrap();
            let rt1 = r["triplets"][0]["energy_ev"].as_f64().unwrap();
            let rf = r["singlets"][0]["oscillator_strength"].as_f64().unwrap();
            println!(
                "{name:<34} {:>6.2}/{:<6.2} {:>6.2}/{:<6.2} {:>6.2}/{:<6.2} {:>7.3}/{:<7.3}",
                e.s1_ev,
                rs1,
                e.t1_ev,
                rt1,
                e.delta_est_ev,
                rs1 - rt1,
                e.f_s1,
                rf
            );
            es1 += (e.s1_ev - rs1).abs();
            et1 += (e.t1_ev - rt1).abs();
            ed += (e.delta_est_ev - (rs1 - rt1)).abs();
            n += 1;
        }
    }
    if n > 0 {
        let n = n as f64;
        println!(
            "\n{n} molecules: MAE S1 {:.2} eV, T1 {:.2} eV, ΔEST {:.2} eV (raw, uncalibrated)",
            es1 / n,
            et1 / n,
            ed / n
        );
    }
}
