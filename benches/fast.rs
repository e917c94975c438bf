//! The fast fragment tier per tuple (descriptors from the card tables + the bound model +
//! log10 k_TADF), over 100,000 pre-enumerated tuples of the shipped library (all
//! architectures, Dn-A up to four mixed donors): `cargo bench --bench fast`.
//! Target (issue 5): ≥ 10^7 tuples/s per core, no allocation per tuple. Measured with the
//! screen score's boosted trees (the default) and without (`[screen] trees = false`).
use std::ops::ControlFlow;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use std::hint::black_box;

use lumisift::combine::{DnAMode, EnumerateParams, Enumerator, TupleEvent};
use lumisift::fast::{CardSet, FastModel};
use lumisift::model::Architecture;
use lumisift::pi::params::PppParams;

fn bench(c: &mut Criterion) {
    let lib = lumisift::fragments::load_paths(&["fragments".into()]).unwrap();
    let set = CardSet::for_library(&lib, &PppParams::default_set(), 300.0).unwrap();
    let bound = FastModel::default_model().bind(&set, 1.7, 300.0);
    let mut ridge_only = bound.clone();
    ridge_only.drop_trees();
    let params = EnumerateParams {
        architectures: Architecture::ALL.to_vec(),
        dn_a_max: 4,
        dn_a_mode: DnAMode::Mixed,
        ..EnumerateParams::default()
    };
    let en = Enumerator::new(&lib, &params).unwrap();
    // Every 7th admitted tuple, so all architectures are represented.
    let mut tuples = Vec::new();
    let mut k = 0usize;
    en.for_each(|e| {
        if let TupleEvent::Admitted(t) = e {
            if k.is_multiple_of(7) {
                tuples.push(t);
            }
            k += 1;
        }
        if tuples.len() >= 100_000 {
            ControlFlow::Break(())
        } else {
            ControlFlow::Continue(())
        }
    });
    let mut g = c.benchmark_group("fast tier");
    g.throughput(Throughput::Elements(tuples.len() as u64));
    for (name, model) in [("score", &bound), ("score without trees", &ridge_only)] {
        g.bench_function(format!("{name}, {} tuples", tuples.len()), |b| {
            b.iter(|| {
                let mut s = 0.0;
                for t in &tuples {
                    if let Some((m, _)) = model.score(&set, black_box(t)) {
                        s += m;
                    }
                }
                black_box(s)
            })
        });
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
