//! Ranking and shortlisting 10^6 synthetic rows: filters (ΔEST, f, S1 window, molecular
//! weight, convergence), two-objective Pareto sorting with crowding distance, desirability,
//! final order; then MaxMin picking of 20 from all kept rows on 2048-bit fingerprints.
//! `cargo bench --bench rank -- --warm-up-time 1 --measurement-time 5 --sample-size 10`.
//! Target (issue 7): ranking + shortlist of 10^6 rows ≤ 30 s on one core (all sequential).
//!
//! Rows are seeded pseudo-random (SplitMix64): ΔEST uniform 0–0.5 eV on a 1 meV grid (ties),
//! log10 f uniform −4…0, S1 2.2–3.4 eV, MW 300–1100; every second row carries a σ (from a
//! calibration), every 50th is not converged. Fingerprints: random sparse bit sets.
use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;

use lumisift::chem::Fingerprint;
use lumisift::rank::{DiversityParams, Filters, PickInput, RankParams, Scored, Uncertain};

const N: usize = 1_000_000;

#[path = "../tests/support/splitmix.rs"]
mod splitmix;
use splitmix::Rng;

fn rows() -> Vec<Scored> {
    let mut rng = Rng(2026);
    (0..N)
        .map(|i| {
            let sig = |v: f64, s: f64| {
                if i % 2 == 0 {
                    Uncertain::with_sigma(v, s)
                } else {
                    Uncertain::exact(v)
                }
            };
            let dest = (rng.unit() * 500.0).floor() / 1000.0;
            let f = 10f64.powf(-4.0 + 4.0 * rng.unit());
            let s1 = 2.2 + 1.2 * rng.unit();
            Scored {
                candidate_id: format!("{i:032x}"),
                s1_ev: Some(sig(s1, 0.1)),
                t1_ev: Some(sig(s1 - dest, 0.1)),
                delta_est_ev: Some(sig(dest, 0.05)),
                osc_strength: Some(sig(f, 0.3 * f)),
                mol_weight: Some(300.0 + 800.0 * rng.unit()),
                not_converged: i % 50 == 0,
                fragment_ids: vec![
                    format!("acc-{}", rng.next() % 47),
                    format!("don-{}", rng.next() % 42),
                ],
                ..Scored::default()
            }
        })
        .collect()
}

fn fingerprints() -> Vec<Fingerprint> {
    let mut rng = Rng(7);
    (0..N)
        .map(|_| Fingerprint {
            words: (0..32)
                .map(|_| rng.next() & rng.next() & rng.next())
                .collect(),
        })
        .collect()
}

fn params() -> RankParams {
    RankParams {
        filters: Filters {
            delta_est_max_ev: Some(0.3),
            f_min: Some(0.001),
            s1_min_ev: Some(2.4),
            s1_max_ev: Some(3.2),
            mw_max: Some(1000.0),
            ..Filters::default()
        },
        ..RankParams::default()
    }
}

fn shortlist(
    ranking: &lumisift::rank::Ranking,
    rows: &[Scored],
    fps: &[Fingerprint],
) -> lumisift::rank::Picks {
    let pool: Vec<PickInput> = ranking
        .order
        .iter()
        .map(|&i| PickInput {
            fingerprint: &fps[i],
            fragment_ids: &rows[i].fragment_ids,
        })
        .collect();
    lumisift::rank::pick_diverse(
        &pool,
        &DiversityParams {
            n_pick: 20,
            pool_size: 0,
            ..DiversityParams::default()
        },
    )
    .unwrap()
}

fn bench(c: &mut Criterion) {
    let rows = rows();
    let fps = fingerprints();
    let p = params();
    let r = lumisift::rank::rank(&rows, &p).unwrap();
    eprintln!(
        "rank bench: {} rows, {} kept, {} in front 0",
        rows.len(),
        r.order.len(),
        r.rows.iter().filter(|x| x.front == Some(0)).count()
    );
    let mut g = c.benchmark_group("rank_1e6");
    g.bench_function("filters_pareto2_crowding_desirability", |b| {
        b.iter(|| lumisift::rank::rank(black_box(&rows), black_box(&p)).unwrap())
    });
    g.bench_function("maxmin_20_of_all_kept", |b| {
        b.iter(|| shortlist(black_box(&r), &rows, &fps))
    });
    g.bench_function("rank_and_shortlist", |b| {
        b.iter(|| {
            let r = lumisift::rank::rank(black_box(&rows), black_box(&p)).unwrap();
            shortlist(&r, &rows, &fps)
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
