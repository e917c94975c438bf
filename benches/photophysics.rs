//! Colour + rates + kinetics per candidate (`photophysics::assess` on a stored-size estimate):
//! `cargo bench --bench photophysics`. Target (issue 5): ≤ 20 µs per candidate.
use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;

use lumisift::chem::parse_smiles;
use lumisift::photophysics::{BandParams, RateParams, assess};
use lumisift::pi::estimate::{EstimateParams, estimate};
use lumisift::pi::params::PppParams;

fn bench(c: &mut Criterion) {
    let m = parse_smiles("N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21").unwrap();
    let est = estimate(&m, &PppParams::default_set(), &EstimateParams::default()).unwrap();
    let (p, b) = (RateParams::default(), BandParams::default());
    let mut g = c.benchmark_group("photophysics");
    g.bench_function(
        format!(
            "assess (6+6 states, {} angle samples, band colour)",
            est.angle_samples.len()
        ),
        |bch| bch.iter(|| black_box(assess(black_box(&est), &p, &b))),
    );
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
