use lumisift::chem::parse_smiles;
use lumisift::geometry::{layout, rotate_about_bond};
use lumisift::pi::build::build_model;
use lumisift::pi::estimate::links;
use lumisift::pi::params::PppParams;
use lumisift::pi::{CisParams, cis, scf};
fn main() {
    let ppp = PppParams::default_set();
    for smi in [
        "N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21",
        "c1ccc2c(c1)Oc1ccccc1N2c1ccc(cc1)-c1ccc(cc1)-c1nc(nc(n1)-c1ccccc1)-c1ccccc1",
    ] {
        let m = parse_smiles(smi).unwrap();
        let mut coords = layout(&m);
        for (a, b) in links(&m) {
            rotate_about_bond(&m, &mut coords.points, a, b, 60f64.to_radians());
        }
        let built = build_model(&m, &coords, &ppp).unwrap();
        let n = 50;
        let t = std::time::Instant::now();
        let mut r = None;
        for _ in 0..n {
            r = Some(scf(&built.model, &Default::default()).unwrap());
        }
        let ts = t.elapsed().as_secs_f64() / n as f64;
        let r = r.unwrap();
        let t = std::time::Instant::now();
        for _ in 0..n {
            std::hint::black_box(cis(
                &built.model,
                &r,
                &CisParams {
                    n_roots: 6,
                    ..Default::default()
                },
            ));
        }
        let tc = t.elapsed().as_secs_f64() / n as f64;
        let t = std::time::Instant::now();
        let e = lumisift::pi::estimate::estimate(&m, &ppp, &Default::default()).unwrap();
        let te = t.elapsed().as_secs_f64();
        println!("estimate {:.1} ms, twists {:?}", te * 1e3, e.twists_deg);
        println!(
            "{} sites: scf {:.2} ms ({} it), cis {:.2} ms",
            built.model.n_sites(),
            ts * 1e3,
            r.info.iterations,
            tc * 1e3
        );
    }
}
#[allow(dead_code)]
fn est() {}
