//! Parse + canonicalise + formula + molecular weight per molecule, on the RDKit fixture's
//! randomised SMILES (`tests/fixtures/rdkit_molecules.jsonl`). Compare with
//! `python3 benches/rdkit_rate.py` on the same machine.

use std::hint::black_box;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use lumisift::chem::{canonical_smiles, parse_smiles, props};

/// Same allocator as the shipped binary, so the figures are what `lumisift molinfo` gets.
#[global_allocator]
static GLOBAL: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn fixture_smiles() -> Vec<String> {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/rdkit_molecules.jsonl"
    ))
    .expect("fixture present");
    let mut out = Vec::new();
    for line in text.lines() {
        let v: serde_json::Value = serde_json::from_str(line).expect("valid JSON line");
        for s in v["randomised"].as_array().expect("randomised list") {
            out.push(s.as_str().expect("string").to_string());
        }
    }
    out
}

fn bench(c: &mut Criterion) {
    let smiles = fixture_smiles();
    let mut g = c.benchmark_group("chem");
    g.throughput(Throughput::Elements(smiles.len() as u64));
    g.sample_size(10);
    g.bench_function("parse+canon+formula+mw", |b| {
        b.iter(|| {
            for s in &smiles {
                let m = parse_smiles(s).expect("fixture parses");
                black_box(canonical_smiles(&m));
                black_box(props::formula(&m));
                black_box(props::average_mass(&m).expect("weights known"));
            }
        })
    });
    g.bench_function("parse", |b| {
        b.iter(|| {
            for s in &smiles {
                black_box(parse_smiles(s).expect("fixture parses"));
            }
        })
    });
    let mols: Vec<_> = smiles.iter().map(|s| parse_smiles(s).unwrap()).collect();
    g.bench_function("canonical_smiles", |b| {
        b.iter(|| {
            for m in &mols {
                black_box(canonical_smiles(m));
            }
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
