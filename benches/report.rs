//! Report generation: the HTML page (CIE diagram, ΔEST–f scatter, sortable table) for 2,000
//! candidate rows and 15 shortlisted molecules with structure drawings and torsion curves.
//! `cargo bench --bench report -- --warm-up-time 1 --measurement-time 5 --sample-size 10`.
//! Target (issue 7): report generation ≤ 5 s.
//!
//! Rows are seeded pseudo-random values in plausible ranges (bench inputs, not chemistry);
//! the shortlisted structures are real SMILES of shipped-library products.
use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;

use lumisift::report::figures::{Drawing, TargetMark};
use lumisift::report::html::{ReportData, ReportRow, ShortlistDetail, page};

const SMILES: [&str; 3] = [
    "N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21",
    "CC1(C)c2ccccc2N(c2ccccc21)c1ccc(cc1)-c1nc(nc(n1)-c1ccccc1)-c1ccccc1",
    "N#Cc1cc(C#N)c(cc1N(c1ccccc1)c1ccccc1)N(c1ccccc1)c1ccccc1",
];

fn data() -> ReportData {
    let mut state = 42u64;
    let mut unit = move || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (state >> 11) as f64 / (1u64 << 53) as f64
    };
    let rows: Vec<ReportRow> = (0..2000)
        .map(|k| ReportRow {
            candidate_id: format!("{k:032x}"),
            name: String::new(),
            canonical_smiles: SMILES[k % 3].into(),
            s1_ev: 2.4 + unit(),
            t1_ev: 2.3 + unit(),
            delta_est_ev: 0.5 * unit(),
            osc_strength: 10f64.powf(-4.0 * unit()),
            calibrated: None,
            log10_k_risc: 3.0 + 4.0 * unit(),
            cie_x: 0.12 + 0.3 * unit(),
            cie_y: 0.05 + 0.5 * unit(),
            peak_nm: 420.0 + 120.0 * unit(),
            score: unit(),
            front: 1 + (k % 7),
            shortlisted: k < 15,
            reference: false,
            rejected: Vec::new(),
            effort: Some(2.0),
            couplings: "buchwald_hartwig ×1".into(),
            flags: Vec::new(),
        })
        .collect();
    let shortlist = (0..15)
        .map(|k| {
            let smi = SMILES[k % 3];
            let n = lumisift::chem::parse_smiles(smi).unwrap().atom_count();
            ShortlistDetail {
                candidate_id: format!("{k:032x}"),
                title: smi.into(),
                torsion: vec![(0..=12).map(|i| (i as f64 * 15.0, 20.0 * unit())).collect()],
                drawing: Some(
                    Drawing::from_smiles(smi, &vec![1.0 / n as f64; n], &vec![0.0; n]).unwrap(),
                ),
                notes: vec!["note".into()],
            }
        })
        .collect();
    ReportData {
        title: "bench".into(),
        provenance: vec![],
        parameters: vec![],
        target: Some(TargetMark {
            name: "bt2020-blue".into(),
            xy: (0.131, 0.046),
            radius_xy: 0.03,
        }),
        rows,
        shortlist,
        cautions: vec!["caution".into()],
        banner: None,
    }
}

fn bench(c: &mut Criterion) {
    let d = data();
    c.bench_function("report_page_2000_rows_15_shortlisted", |b| {
        b.iter(|| black_box(page(black_box(&d)).unwrap().len()))
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
