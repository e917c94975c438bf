//! Compare a 12 × 12 CIS active space with full CIS on donor–acceptor molecules (the window is
//! not converged for large systems, which is why full CIS with Davidson is the default):
//! `cargo run --release --example active_space_check`.
use lumisift::chem::parse_smiles;
use lumisift::geometry::{layout, rotate_about_bond};
use lumisift::pi::build::build_model;
use lumisift::pi::estimate::links;
use lumisift::pi::params::PppParams;
use lumisift::pi::{CisParams, cis, scf};

fn main() {
    let ppp = PppParams::default_set();
    let mut worst: f64 = 0.0;
    for smi in [
        "N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21",
        "N#Cc1c(-n2c3ccccc3c3ccccc32)c(-n2c3ccccc3c3ccccc32)c(-n2c3ccccc3c3ccccc32)c(C#N)c1-n1c2ccccc2c2ccccc21",
        "c1ccc2c(c1)Oc1ccccc1N2c1ccc(cc1)-c1nc(nc(n1)-c1ccccc1)-c1ccccc1",
        "CC1(C)c2ccccc2N(c2ccccc21)c1ccc(cc1)S(=O)(=O)c1ccc(cc1)N1c2ccccc2C(C)(C)c2ccccc21",
    ] {
        let m = parse_smiles(smi).unwrap();
        let mut c = layout(&m);
        for (a, b) in links(&m) {
            rotate_about_bond(&m, &mut c.points, a, b, 60f64.to_radians());
        }
        let built = build_model(&m, &c, &ppp).unwrap();
        let r = scf(&built.model, &Default::default()).unwrap();
        let t0 = std::time::Instant::now();
        let full = cis(
            &built.model,
            &r,
            &CisParams {
                n_roots: 4,
                ..Default::default()
            },
        );
        let tf = t0.elapsed();
        let t1 = std::time::Instant::now();
        let act = cis(
            &built.model,
            &r,
            &CisParams {
                n_roots: 4,
                n_occ: Some(12),
                n_vir: Some(12),
                ..Default::default()
            },
        );
        let ta = t1.elapsed();
        let ds = (full.singlets[0].energy - act.singlets[0].energy).abs();
        let dt = (full.triplets[0].energy - act.triplets[0].energy).abs();
        worst = worst.max(ds).max(dt);
        println!(
            "{} π sites: S1 full {:.4} active {:.4} | T1 full {:.4} active {:.4} | full {:?}, active {:?}",
            built.model.n_sites(),
            full.singlets[0].energy,
            act.singlets[0].energy,
            full.triplets[0].energy,
            act.triplets[0].energy,
            tf,
            ta
        );
    }
    println!("largest |Δ| {worst:.4} eV");
}
