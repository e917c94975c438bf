//! The fast fragment tier per tuple (the bound model's screen score), over 100,000
//! pre-enumerated tuples of the shipped library (all architectures, Dn-A up to four mixed
//! donors) in the screen's path (`fast::Screener`, arm records kept per run of a core), and
//! through the descriptors (`BoundModel::score_stream`, the reference the screener is tested
//! against): `cargo bench --bench fast`. Instruction counts of the same loops:
//! `examples/fast_tier_profile.rs`.
//! Target (issue 5): ≥ 10^7 tuples/s per core, no allocation per tuple. Measured with the
//! screen score's boosted trees behind their gate (the default), with the trees refining
//! every tuple (`[screen] refine_all = true`) and without them (`[screen] trees = false`).
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use std::hint::black_box;

use lumisift::fast::{CardSet, Describer, FastModel, Screener};
use lumisift::pi::params::PppParams;

#[path = "support/fast_tuples.rs"]
mod fast_tuples;

fn bench(c: &mut Criterion) {
    let lib = lumisift::fragments::load_paths(&["fragments".into()]).unwrap();
    let set = CardSet::for_library(&lib, &PppParams::default_set(), 300.0).unwrap();
    let bound = FastModel::default_model().bind(&set, 1.7, 300.0);
    let mut ridge_only = bound.clone();
    ridge_only.drop_trees();
    let mut ungated = bound.clone();
    ungated.refine_all();
    let tuples = fast_tuples::tuples(&lib, fast_tuples::Sample::Blocks);
    let mut g = c.benchmark_group("fast tier");
    g.throughput(Throughput::Elements(tuples.len() as u64));
    for (name, model) in [
        ("score", &bound),
        ("score, every tuple refined", &ungated),
        ("score without trees", &ridge_only),
    ] {
        g.bench_function(format!("{name}, {} tuples", tuples.len()), |b| {
            b.iter(|| {
                let mut s = 0.0;
                let mut screener = Screener::new(model, &set);
                for t in &tuples {
                    if let Some((m, _)) = screener.score(black_box(t)) {
                        s += m;
                    }
                }
                black_box(s)
            })
        });
    }
    g.bench_function(
        format!("score from the descriptors, {} tuples", tuples.len()),
        |b| {
            b.iter(|| {
                let mut s = 0.0;
                let mut d = Describer::new(&set);
                for t in &tuples {
                    if let Some((m, _)) = bound.score_stream(&mut d, black_box(t)) {
                        s += m;
                    }
                }
                black_box(s)
            })
        },
    );
    // The descriptors alone (the card and pair-table look-ups every score starts from).
    g.bench_function(format!("descriptors, {} tuples", tuples.len()), |b| {
        b.iter(|| {
            let mut s = 0.0;
            let mut d = Describer::new(&set);
            for t in &tuples {
                let mut x = [0.0; lumisift::fast::N_FEATURES];
                if d.describe(black_box(t), &mut x).is_some() {
                    s += black_box(&x)[19];
                }
            }
            black_box(s)
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
