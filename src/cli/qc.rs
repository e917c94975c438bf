//! `ingest`, `calibrate` and `suggest`: printing the outcomes of the QC loop.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use lumisift::campaign::calibration::{calibrate_store, suggest_batch};
use lumisift::campaign::ingest::{IngestOptions, ingest};
use lumisift::campaign::store::Store;
use lumisift::qc::table::{ResultKind, read_table_path};
use lumisift::qc::{QcError, read_path};

use super::fail;

/// `ingest --show FILE...`: what each file yields, without touching a store.
pub fn show(paths: &[PathBuf], json: bool) -> ExitCode {
    let files = match lumisift::campaign::ingest::collect_files(paths) {
        Ok(f) => f,
        Err(e) => return fail(e),
    };
    let mut out = Vec::new();
    let mut bad = 0usize;
    for (p, _) in files {
        let name = p.display().to_string();
        let is_csv = p.extension().is_some_and(|e| e.eq_ignore_ascii_case("csv"));
        let v = if is_csv {
            match read_table_path(&p) {
                Ok((rows, diags)) => serde_json::json!({
                    "file": name, "format": "table", "rows": rows, "diagnostics": diags,
                }),
                Err(e) => {
                    bad += 1;
                    serde_json::json!({"file": name, "error": e.to_string()})
                }
            }
        } else {
            match read_path(&p) {
                Ok((res, diags)) => serde_json::json!({
                    "file": name, "format": res.program.to_string(), "version": res.version,
                    "method": res.method, "partial": res.partial,
                    "calculations": res.calculations.iter().map(|c| serde_json::json!({
                        "method": c.method,
                        "natoms": c.geometry.as_ref().map(|g| g.natom()),
                        "states": c.states,
                    })).collect::<Vec<_>>(),
                    "diagnostics": diags,
                }),
                Err(e) => {
                    bad += 1;
                    let natoms = match &e {
                        QcError::NoExcitedStates { geometry, .. } => {
                            geometry.as_ref().map(|g| g.natom())
                        }
                        _ => None,
                    };
                    serde_json::json!({"file": name, "error": e.to_string(), "natoms": natoms})
                }
            }
        };
        out.push(v);
    }
    if json {
        println!(
            "{}",
            serde_json::to_string_pretty(&out).expect("serialisable")
        );
    } else {
        for v in &out {
            print_show(v);
        }
    }
    if bad > 0 {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    }
}

fn print_show(v: &serde_json::Value) {
    let s = |x: &serde_json::Value| x.as_str().unwrap_or("–").to_string();
    println!("== {}", s(&v["file"]));
    if let Some(e) = v["error"].as_str() {
        println!("   error: {e}");
        if let Some(n) = v["natoms"].as_u64() {
            println!("   geometry: {n} atoms");
        }
        return;
    }
    if v["format"] == "table" {
        println!(
            "   neutral results table, {} row(s)",
            v["rows"].as_array().map_or(0, |a| a.len())
        );
        println!(
            "   {:>5} {:<34} {:<28} {:>4} {:>9} {:>8}",
            "line", "candidate", "kind", "mult", "E/eV", "f"
        );
        for r in v["rows"].as_array().into_iter().flatten() {
            println!(
                "   {:>5} {:<34} {:<28} {:>4} {:>9.4} {:>8}",
                r["line"].as_u64().unwrap_or_default(),
                s(&r["candidate"]),
                s(&r["kind"]),
                r["multiplicity"]
                    .as_u64()
                    .map_or("–".into(), |m| m.to_string()),
                r["energy_ev"].as_f64().unwrap_or(f64::NAN),
                r["osc_strength"]
                    .as_f64()
                    .map_or("–".into(), |f| format!("{f:.4}"))
            );
        }
    } else {
        println!(
            "   program {} {}{}",
            s(&v["format"]),
            v["version"].as_str().unwrap_or(""),
            if v["partial"] == true {
                "  (PARTIAL: the file ends before normal termination)"
            } else {
                ""
            }
        );
        for (k, c) in v["calculations"]
            .as_array()
            .into_iter()
            .flatten()
            .enumerate()
        {
            println!(
                "   calculation {}: method {}; geometry {}",
                k + 1,
                c["method"].as_str().unwrap_or("not stated"),
                c["natoms"]
                    .as_u64()
                    .map_or("none".into(), |n| format!("{n} atoms"))
            );
            let states = c["states"].as_array().cloned().unwrap_or_default();
            if states.is_empty() {
                continue;
            }
            println!(
                "   {:>5} {:>4} {:>9} {:>8}  label",
                "state", "mult", "E/eV", "f"
            );
            for st in &states {
                println!(
                    "   {:>5} {:>4} {:>9.4} {:>8}  {}",
                    st["index"].as_u64().unwrap_or_default(),
                    st["multiplicity"]
                        .as_u64()
                        .map_or("?".into(), |m| m.to_string()),
                    st["energy_ev"].as_f64().unwrap_or(f64::NAN),
                    st["osc_strength"]
                        .as_f64()
                        .map_or("–".into(), |f| format!("{f:.4}")),
                    s(&st["label"])
                );
            }
        }
    }
    for d in v["diagnostics"].as_array().into_iter().flatten() {
        println!(
            "   {}{}: {}",
            s(&d["severity"]).to_lowercase(),
            d["line"]
                .as_u64()
                .map_or(String::new(), |l| format!(" line {l}")),
            s(&d["message"])
        );
    }
}

/// `ingest STORE PATH...`.
pub fn ingest_cmd(
    store: &Path,
    paths: &[PathBuf],
    kind: &str,
    conditions: Option<String>,
    json: bool,
) -> ExitCode {
    let Some(kind) = ResultKind::from_name(kind) else {
        let known: Vec<&str> = ResultKind::ALL.iter().map(|k| k.name()).collect();
        return fail(format!(
            "--kind '{kind}': unknown (known: {})",
            known.join(", ")
        ));
    };
    let mut st = match Store::open_existing(store) {
        Ok(s) => s,
        Err(e) => return fail(e),
    };
    let sum = match ingest(&mut st, paths, &IngestOptions { kind, conditions }) {
        Ok(s) => s,
        Err(e) => return fail(e),
    };
    if json {
        println!(
            "{}",
            serde_json::to_string_pretty(&sum).expect("serialisable")
        );
    } else {
        for f in &sum.files {
            let m: Vec<String> = f
                .matches
                .iter()
                .map(|m| match m.candidate() {
                    Some(id) => format!("matched {}", &id[..12]),
                    None => m.status().to_string(),
                })
                .collect();
            println!(
                "{:<10} {:<11} {:>4} state(s)  {}{}{}",
                f.status,
                f.format,
                f.states,
                f.path,
                if m.is_empty() {
                    String::new()
                } else {
                    format!("  [{}]", summarise(&m))
                },
                f.message
                    .as_ref()
                    .map_or(String::new(), |x| format!("  ({x})"))
            );
            for d in &f.diagnostics {
                if d.severity >= lumisift::qc::Severity::Warning {
                    println!("           {d}");
                }
            }
        }
        println!(
            "{} state(s) stored; items matched {}, ambiguous {}, conflict {}, unmatched {}; \
             files failed {}, skipped {}",
            sum.states_stored,
            sum.matched,
            sum.ambiguous,
            sum.conflict,
            sum.unmatched,
            sum.failed,
            sum.skipped
        );
    }
    if sum.failed > 0 {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    }
}

/// "matched ab ×3, unmatched" from a list of outcomes.
fn summarise(items: &[String]) -> String {
    let mut out: Vec<(String, usize)> = Vec::new();
    for i in items {
        match out.iter_mut().find(|(s, _)| s == i) {
            Some(e) => e.1 += 1,
            None => out.push((i.clone(), 1)),
        }
    }
    out.iter()
        .map(|(s, n)| {
            if *n > 1 {
                format!("{s} ×{n}")
            } else {
                s.clone()
            }
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// `calibrate STORE`.
pub fn calibrate_cmd(store: &Path, kind: Option<&str>, coverage: f64, json: bool) -> ExitCode {
    let mut st = match Store::open_existing(store) {
        Ok(s) => s,
        Err(e) => return fail(e),
    };
    let params = lumisift::calibrate::CalibrateParams {
        coverage,
        ..Default::default()
    };
    let outcomes = match calibrate_store(&mut st, kind, None, &params) {
        Ok(o) => o,
        Err(e) => return fail(e),
    };
    if json {
        println!(
            "{}",
            serde_json::to_string_pretty(&outcomes).expect("serialisable")
        );
    } else {
        for o in &outcomes {
            match (&o.calibration, &o.error) {
                (Some(c), _) => {
                    println!(
                        "{}: {} points, calibration {} applied to {} candidates",
                        o.kind,
                        o.n_points,
                        o.calibration_id.unwrap_or_default(),
                        o.applied
                    );
                    println!(
                        "   {:<10} {:<11} {:>8} {:>8} {:>6} {:>6} {:>9}",
                        "target", "model", "MAE", "RMSE", "R²", "ρ", "±(90 %)"
                    );
                    let row = |name: &str,
                               model: String,
                               cv: &lumisift::calibrate::CvMetrics,
                               hw: f64| {
                        println!(
                            "   {:<10} {:<11} {:>8.3} {:>8.3} {:>6} {:>6} {:>9.3}",
                            name,
                            model,
                            cv.mae,
                            cv.rmse,
                            cv.r2.map_or("–".into(), |r| format!("{r:.2}")),
                            cv.spearman.map_or("–".into(), |r| format!("{r:.2}")),
                            hw
                        )
                    };
                    for (name, fit) in [
                        ("S1/eV", &c.s1),
                        ("ΔEST/eV", &c.delta_est),
                        ("log10 f", &c.log10_f),
                    ] {
                        match fit {
                            Some(fit) => {
                                row(name, format!("{:?}", fit.family), &fit.cv, fit.half_width)
                            }
                            None => println!("   {name:<10} not fitted (raw values stand)"),
                        }
                    }
                    if let Some(t1) = &c.t1 {
                        row("T1/eV", "S1 − ΔEST".into(), &t1.cv, t1.half_width);
                    }
                    for sk in &c.skipped {
                        println!("   skipped: {sk}");
                    }
                    println!("   (errors from cross-validation with folds grouped by fragment)");
                }
                (None, Some(e)) => println!("{}: {} points, not fitted: {e}", o.kind, o.n_points),
                (None, None) => {}
            }
        }
    }
    if outcomes.iter().any(|o| o.calibration.is_some()) {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    }
}

/// `suggest STORE --count K`.
pub fn suggest_cmd(
    store: &Path,
    count: usize,
    beta: f64,
    max_similarity: f64,
    write_ids: Option<&Path>,
    json: bool,
) -> ExitCode {
    let st = match Store::open_existing(store) {
        Ok(s) => s,
        Err(e) => return fail(e),
    };
    let params = lumisift::calibrate::suggest::SuggestParams {
        k: count,
        beta,
        max_similarity,
    };
    let picks = match suggest_batch(&st, &params) {
        Ok(p) => p,
        Err(e) => return fail(e),
    };
    if let Some(p) = write_ids {
        let text: String = picks
            .iter()
            .map(|s| format!("{} {}\n", s.candidate_id, s.canonical_smiles))
            .collect();
        if let Err(e) = std::fs::write(p, text) {
            return fail(format!("{}: {e}", p.display()));
        }
    }
    if json {
        println!(
            "{}",
            serde_json::to_string_pretty(&picks).expect("serialisable")
        );
    } else {
        println!(
            "{:>3} {:<34} {:>7} {:>6} {:>7} {:<10} SMILES",
            "#", "candidate", "μ", "σ", "score", "basis"
        );
        for (k, s) in picks.iter().enumerate() {
            println!(
                "{:>3} {:<34} {:>7.2} {:>6.2} {:>7.2} {:<10} {}",
                k + 1,
                s.candidate_id,
                s.mu,
                s.sigma,
                s.score,
                if s.out_of_domain {
                    "cal., OOD"
                } else if s.calibrated {
                    "calibrated"
                } else {
                    "raw π"
                },
                s.canonical_smiles
            );
        }
        println!(
            "score = μ + β·σ with μ = log10 k_TADF (s⁻¹), β = {beta}; no two picks (or a pick and a \
             computed candidate) above Tanimoto {max_similarity}. Estimates, not measurements."
        );
    }
    if picks.len() < count {
        eprintln!(
            "{} of {count} picked: the similarity limit or the pool size stopped the rest",
            picks.len()
        );
    }
    ExitCode::SUCCESS
}
