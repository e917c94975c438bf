//! π tier on one core: SCF + CIS (singlets and triplets) at one conformation, and the full
//! torsion-averaged estimate, for donor–acceptor molecules of increasing size. Targets (issue):
//! ≤ 5 ms SCF + CIS and ≤ 50 ms estimate at ~50 π atoms.

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use lumisift::pi::estimate::{EstimateParams, estimate};
use lumisift::pi::params::PppParams;
use lumisift::pi::{CisParams, cis, scf};

#[path = "support/pi_molecules.rs"]
mod pi_molecules;

#[global_allocator]
static GLOBAL: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn bench(c: &mut Criterion) {
    let ppp = PppParams::default_set();
    let mut g = c.benchmark_group("pi");
    g.sample_size(10);
    for (name, smi) in pi_molecules::MOLECULES {
        let (m, built) = pi_molecules::twisted_model(smi, &ppp);
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
