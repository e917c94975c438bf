//! Calibration: one fit (120 points, nested grouped CV) and applying it to 100,000 candidates
//! (`Calibration::predict`): `cargo bench --bench calibrate`. Target (issue 6): 10^5 candidates
//! well under a second. Inputs are fixed (SplitMix64 stream with a fixed seed).
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use std::hint::black_box;

use lumisift::calibrate::{CalPoint, CalibrateParams, ObservedValues, RawValues, fit};

/// SplitMix64 (Steele, Lea & Flood, OOPSLA 2014) as a fixed stream of uniforms in [0, 1).
struct Stream(u64);

impl Stream {
    fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    }
}

struct Candidate {
    raw: RawValues,
    descriptors: Vec<f64>,
    groups: Vec<String>,
}

fn candidate(s: &mut Stream) -> (Candidate, usize) {
    let d = (s.next() * 12.0) as usize;
    let a = (s.next() * 8.0) as usize;
    let c = Candidate {
        raw: RawValues {
            s1_ev: 2.0 + 1.5 * s.next(),
            delta_est_ev: 0.05 + 0.7 * s.next(),
            log10_f: -3.0 + 2.5 * s.next(),
        },
        descriptors: (0..4).map(|_| s.next()).collect(),
        groups: vec![format!("D{d}"), format!("A{a}")],
    };
    (c, d)
}

fn bench(c: &mut Criterion) {
    let mut s = Stream(2026);
    let points: Vec<CalPoint> = (0..120)
        .map(|i| {
            let (c, d) = candidate(&mut s);
            let noise = 0.05 * (s.next() - 0.5);
            CalPoint {
                candidate_id: format!("c{i}"),
                groups: c.groups,
                observed: ObservedValues {
                    s1_ev: Some(0.4 + 0.85 * c.raw.s1_ev + 0.03 * d as f64 + noise),
                    delta_est_ev: Some(0.1 + 0.6 * c.raw.delta_est_ev + noise),
                    f: Some(10f64.powf(0.9 * c.raw.log10_f + noise)),
                },
                raw: c.raw,
                descriptors: c.descriptors,
                kind: "tddft".into(),
            }
        })
        .collect();
    let params = CalibrateParams::default();
    let cal = fit(&points, &params).unwrap();
    let cands: Vec<Candidate> = (0..100_000).map(|_| candidate(&mut s).0).collect();

    let mut g = c.benchmark_group("calibrate");
    g.sample_size(10);
    g.bench_function("fit 120 points (nested grouped CV)", |b| {
        b.iter(|| black_box(fit(black_box(&points), &params).unwrap()))
    });
    g.throughput(Throughput::Elements(cands.len() as u64));
    g.bench_function(format!("predict {} candidates", cands.len()), |b| {
        b.iter(|| {
            let mut acc = 0.0;
            for k in &cands {
                let r = cal
                    .predict(black_box(&k.raw), &k.descriptors, &k.groups)
                    .unwrap();
                acc += r.t1_ev.unwrap().value + r.f.unwrap().hi;
            }
            black_box(acc)
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
