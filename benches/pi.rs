//! π tier on one core: SCF + CIS (singlets and triplets) at one conformation, and the full
//! torsion-averaged estimate, for donor–acceptor molecules of increasing size. Targets (issue):
//! ≤ 5 ms SCF + CIS and ≤ 50 ms estimate at ~50 π atoms.

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use lumisift::chem::parse_smiles;
use lumisift::geometry::{layout, rotate_about_bond};
use lumisift::pi::build::build_model;
use lumisift::pi::estimate::{EstimateParams, estimate, links};
use lumisift::pi::params::PppParams;
use lumisift::pi::{CisParams, cis, scf};

#[global_allocator]
static GLOBAL: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn bench(c: &mut Criterion) {
    let ppp = PppParams::default_set();
    let mut g = c.benchmark_group("pi");
    g.sample_size(10);
    for (name, smi) in [
        ("21-site D-A", "N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21"),
        (
            "48-site D-B-A",
            "c1ccc2c(c1)Oc1ccccc1N2c1ccc(cc1)-c1ccc(cc1)-c1nc(nc(n1)-c1ccccc1)-c1ccccc1",
        ),
    ] {
        let m = parse_smiles(smi).unwrap();
        let mut coords = layout(&m);
        for (a, b) in links(&m) {
            rotate_about_bond(&m, &mut coords.points, a, b, 60f64.to_radians());
        }
        let built = build_model(&m, &coords, &ppp).unwrap();
        g.bench_function(
            format!("scf+cis {name} ({} sites)", built.model.n_sites()),
            |b| {
                b.iter(|| {
                    let r = scf(&built.model, &Default::default()).unwrap();
                    black_box(cis(
                        &built.model,
                        &r,
                        &CisParams {
                            n_roots: 6,
                            ..Default::default()
                        },
                    ))
                })
            },
        );
        g.bench_function(format!("estimate {name}"), |b| {
            b.iter(|| black_box(estimate(&m, &ppp, &EstimateParams::default()).unwrap()))
        });
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
