//! The HTML report: golden files for its non-graphical parts (the candidate table and the
//! parameters section; regenerate deliberately with `LUMISIFT_BLESS=1`), the figures present,
//! and the page rendered in a real headless Chromium without script errors.
//!
//! The rows below are formatting fixtures (values chosen to exercise every column, escaping and
//! missing values), not chemistry.

use lumisift::report::figures::{Drawing, TargetMark};
use lumisift::report::html::{
    CalibratedView, ReportData, ReportRow, ShortlistDetail, page, parameters_html, table_html,
};

fn row(id: &str, dest: f64, f: f64) -> ReportRow {
    ReportRow {
        candidate_id: id.into(),
        name: String::new(),
        canonical_smiles: "N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21".into(),
        s1_ev: 3.1,
        t1_ev: 3.1 - dest,
        delta_est_ev: dest,
        osc_strength: f,
        calibrated: None,
        log10_k_risc: 5.2,
        cie_x: 0.15,
        cie_y: 0.12,
        peak_nm: 455.0,
        score: 0.61,
        front: 1,
        shortlisted: false,
        reference: false,
        rejected: Vec::new(),
        effort: Some(2.5),
        couplings: "Buchwald–Hartwig amination ×1".into(),
        flags: Vec::new(),
    }
}

fn data() -> ReportData {
    let mut a = row("0123456789abcdef0123456789abcdef", 0.05, 0.02);
    a.shortlisted = true;
    a.calibrated = Some(CalibratedView {
        s1_ev: (2.95, 2.8, 3.1),
        delta_est_ev: (0.08, 0.02, 0.14),
        osc_strength: (0.03, 0.01, 0.06),
        out_of_domain: true,
    });
    let mut b = row("fedcba9876543210fedcba9876543210", 0.4, 0.3);
    b.front = 0;
    b.rejected = vec!["delta_est_above_max".into(), "f_below_min".into()];
    b.effort = None;
    b.log10_k_risc = f64::NAN;
    let mut r = row("00000000000000000000000000000000", 0.2, 0.1);
    r.reference = true;
    r.name = "ref <A&B>".into();
    ReportData {
        title: "Format fixture".into(),
        provenance: vec!["lumisift test".into()],
        parameters: vec![("filters.delta_est_max_ev".into(), "0.2".into())],
        target: Some(TargetMark {
            name: "bt2020-blue".into(),
            xy: (0.131, 0.046),
            radius_xy: 0.02,
        }),
        rows: vec![a, b, r],
        shortlist: vec![ShortlistDetail {
            candidate_id: "0123456789abcdef0123456789abcdef".into(),
            title: "first pick".into(),
            torsion: vec![vec![(0.0, 20.0), (45.0, 2.0), (90.0, 6.0), (180.0, 20.0)]],
            drawing: Some(
                Drawing::from_smiles("N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21", &[0.0; 22], &[0.05; 22])
                    .unwrap(),
            ),
            notes: vec!["C(aryl)–N: Buchwald–Hartwig amination".into()],
        }],
        cautions: vec!["Predictions are estimates, not safety data.".into()],
        banner: Some("Invented data".into()),
    }
}

fn golden(name: &str, got: &str) {
    let p = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/report")
        .join(name);
    if std::env::var_os("LUMISIFT_BLESS").is_some() {
        std::fs::write(&p, got).unwrap();
    }
    let want = std::fs::read_to_string(&p)
        .unwrap_or_else(|_| panic!("{}: missing; run with LUMISIFT_BLESS=1", p.display()));
    assert_eq!(
        got, want,
        "{name} changed; rerun with LUMISIFT_BLESS=1 if deliberate"
    );
}

#[test]
fn table_and_parameters_match_their_golden_files() {
    let d = data();
    golden("table.golden.html", &table_html(&d.rows));
    golden("parameters.golden.html", &parameters_html(&d));
}

#[test]
fn the_page_is_self_contained_with_figures_table_and_cautions() {
    let html = page(&data()).unwrap();
    assert!(!html.contains("http://") && !html.contains("https://") || only_svg_namespaces(&html));
    assert!(
        html.matches("<svg").count() >= 4,
        "CIE, Pareto, structure, torsion"
    );
    for id in [
        "fig-cie",
        "fig-pareto",
        "candidates",
        "cautions",
        "parameters",
        "short-1",
    ] {
        assert!(html.contains(&format!("id=\"{id}\"")), "{id}");
    }
    assert!(html.contains("ref &lt;A&amp;B&gt;"));
}

/// The only URLs allowed are XML namespace identifiers (not fetched).
fn only_svg_namespaces(html: &str) -> bool {
    html.match_indices("http").all(|(i, _)| {
        let rest = &html[i..];
        rest.starts_with("http://www.w3.org/2000/svg")
            || rest.starts_with("http://www.w3.org/1999/xlink")
    })
}

#[test]
fn the_page_renders_in_headless_chromium_without_script_errors() {
    let Some(chromium) = ["/usr/bin/chromium", "/usr/bin/chromium-browser"]
        .into_iter()
        .find(|p| std::path::Path::new(p).exists())
    else {
        eprintln!("skipped: no Chromium at /usr/bin/chromium (CI installs Debian's package)");
        return;
    };
    let dir = crate::support_bin::temp_dir("html");
    let file = dir.join("report.html");
    std::fs::write(&file, page(&data()).unwrap()).unwrap();
    let out = std::process::Command::new(chromium)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--virtual-time-budget=3000",
        ])
        .arg(format!("--user-data-dir={}", dir.join("profile").display()))
        .arg("--dump-dom")
        .arg(format!("file://{}", file.display()))
        .output()
        .unwrap();
    let dom = String::from_utf8_lossy(&out.stdout);
    assert!(
        dom.contains("data-ready=\"1\""),
        "the page's script did not run: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(!dom.contains("data-script-errors"), "script errors: {dom}");
    assert!(dom.matches("<svg").count() >= 4);
    assert!(dom.contains("id=\"candidates\""));
}
