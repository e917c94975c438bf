//! Reading quantum-chemistry output files from memory: all files in `../shared/qc-samples`
//! (real outputs of ten programs, test data of cclib), parsed with `lumisift::qc::read_str`.
//! Target: at least 200 files per second per core. Skips (with a message) when the samples
//! folder is absent.

use std::hint::black_box;
use std::path::Path;

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use lumisift::qc::read_str;

/// Same allocator as the shipped binary, so the figures are what `lumisift ingest` gets.
#[global_allocator]
static GLOBAL: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn samples() -> Vec<(String, String)> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../shared/qc-samples");
    let mut out = Vec::new();
    let Ok(programs) = std::fs::read_dir(&dir) else {
        return out;
    };
    for p in programs.flatten() {
        let Ok(files) = std::fs::read_dir(p.path()) else {
            continue;
        };
        for f in files.flatten() {
            if let Ok(text) = std::fs::read_to_string(f.path()) {
                out.push((f.path().display().to_string(), text));
            }
        }
    }
    out.sort();
    out
}

fn bench(c: &mut Criterion) {
    let files = samples();
    if files.is_empty() {
        eprintln!("skipped: ../shared/qc-samples not present");
        return;
    }
    let bytes: usize = files.iter().map(|(_, t)| t.len()).sum();
    eprintln!("{} files, {:.2} MB", files.len(), bytes as f64 / 1e6);
    let mut g = c.benchmark_group("ingest");
    g.throughput(Throughput::Elements(files.len() as u64));
    g.sample_size(20);
    g.bench_function("read_str all samples", |b| {
        b.iter(|| {
            for (name, text) in &files {
                // Negative cases are errors by design; both outcomes are work done.
                let _ = black_box(read_str(black_box(text), name));
            }
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
