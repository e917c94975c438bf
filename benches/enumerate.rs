//! Enumeration throughput on the shipped fragment library, one core: building and
//! canonicalising products, and writing them to a campaign store. Compare with
//! `python3 benches/rdkit_enumerate.py` (RDKit on the same library and architectures).

use std::hint::black_box;
use std::ops::ControlFlow;
use std::path::PathBuf;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use lumisift::campaign::store::{Chunk, Store, TupleRow};
use lumisift::chem::{candidate_id, canonical_smiles, props};
use lumisift::combine::{EnumerateParams, Enumerator, Tuple, TupleEvent, assemble};
use lumisift::fragments::load_paths;
use lumisift::model::Architecture;

#[global_allocator]
static GLOBAL: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn bench(c: &mut Criterion) {
    let lib = load_paths(&[PathBuf::from(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/fragments"
    ))])
    .expect("shipped library loads");
    let params = EnumerateParams {
        architectures: vec![Architecture::DA, Architecture::DBA, Architecture::DAD],
        ..EnumerateParams::default()
    };
    let en = Enumerator::new(&lib, &params).unwrap();
    // A fixed, evenly spread subset of 4,000 admitted tuples across the three architectures.
    let mut all: Vec<Tuple> = Vec::new();
    en.for_each(|e| {
        if let TupleEvent::Admitted(t) = e {
            all.push(t);
        }
        ControlFlow::Continue(())
    });
    let step = (all.len() / 4000).max(1);
    let tuples: Vec<Tuple> = all.into_iter().step_by(step).take(4000).collect();
    let rows: Vec<TupleRow> = tuples
        .iter()
        .map(|t| {
            let cand = assemble(&lib, t);
            let smiles = canonical_smiles(&cand.mol);
            TupleRow {
                tuple_key: t.key(&lib),
                architecture: t.architecture.to_string(),
                fragments: cand.provenance.fragments.join(","),
                candidate_id: candidate_id(&smiles),
                formula: props::formula(&cand.mol),
                mol_weight: props::average_mass(&cand.mol).unwrap(),
                heavy_atoms: props::heavy_atom_count(&cand.mol),
                canonical_smiles: smiles,
            }
        })
        .collect();

    let mut g = c.benchmark_group("enumerate");
    g.sample_size(10);
    g.throughput(Throughput::Elements(tuples.len() as u64));
    g.bench_function("assemble+canonical+id+formula+mw", |b| {
        b.iter(|| {
            for t in &tuples {
                let cand = assemble(&lib, t);
                let s = canonical_smiles(&cand.mol);
                black_box(candidate_id(&s));
                black_box(props::formula(&cand.mol));
                black_box(props::average_mass(&cand.mol).unwrap());
                black_box(t.key(&lib));
            }
        })
    });
    let dir = std::env::temp_dir().join(format!("lumisift-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let mut n = 0u64;
    g.bench_function("store-write (chunks of 4096 rows, fresh keys)", |b| {
        b.iter(|| {
            n += 1;
            let path = dir.join(format!("b{n}.sqlite"));
            let mut store = Store::open_or_create(&path).unwrap();
            store
                .write_chunk(&Chunk {
                    stage: "enumerate".into(),
                    param_hash: "bench".into(),
                    index: 0,
                    rows: rows.clone(),
                })
                .unwrap();
        })
    });
    g.finish();
    let _ = std::fs::remove_dir_all(&dir);
}

criterion_group!(benches, bench);
criterion_main!(benches);
