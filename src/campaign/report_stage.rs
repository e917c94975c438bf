//! The report stage: the shortlist outcome, reference emitters and the settings used →
//! [`crate::report::html::ReportData`] → the HTML page, and the shortlist as CSV, JSON and SDF.
//!
//! Reference emitters (a user's known molecules, `name,smiles[,measured_delta_est_ev,
//! measured_pl_peak_nm]` CSV) are estimated here with the shipped parameters and default rate
//! settings, like any candidate, and drawn on every figure and table as anchors; they are
//! never shortlisted.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::error::CampaignError;
use super::shortlist::{ShortlistOutcome, ShortlistSettings};
use crate::report::figures::{Drawing, TargetMark};
use crate::report::html::{CalibratedView, ReportData, ReportRow, ShortlistDetail, page};

/// The `[report]` section of a workflow.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct ReportSettings {
    /// Output folder (relative to the workflow file); `report.html`, `shortlist.csv`,
    /// `shortlist.json` and `shortlist.sdf` are written there.
    pub out_dir: PathBuf,
    pub title: String,
    /// Reference emitters CSV (see the module docs).
    pub references: Option<PathBuf>,
    /// A banner shown at the top (e.g. that the data are invented).
    pub banner: Option<String>,
    /// Most candidates in the table and figures (best-ranked first; 0 = all).
    pub max_rows: usize,
}

impl Default for ReportSettings {
    fn default() -> Self {
        ReportSettings {
            out_dir: PathBuf::from("report"),
            title: "lumisift campaign report".into(),
            references: None,
            banner: None,
            max_rows: 2000,
        }
    }
}

/// The safety cautions every report and shortlist carries, besides
/// [`crate::synth::GENERAL_NOTICE`] (SDS, hygiene plan, regulations, supervision).
pub const CAUTIONS: [&str; 2] = [
    "Every value here is a model estimate, not a measurement and not safety data.",
    "Coupling chemistry is suggested from structure rules only; reagent classes named (palladium \
     catalysts and phosphine ligands, strong bases, organolithiums, copper salts, cyanide \
     sources) carry their own hazards.",
];

/// The one-line notice the command line prints under a shortlist.
pub const SAFETY_NOTICE: &str = "Predictions are estimates, not safety data: before any \
     synthesis consult the safety data sheets, your institution's chemical hygiene plan and local \
     regulations, and work under qualified supervision.";

/// One reference emitter.
#[derive(Debug, Clone, PartialEq)]
pub struct Reference {
    pub name: String,
    pub smiles: String,
    pub measured_delta_est_ev: Option<f64>,
    pub measured_pl_peak_nm: Option<f64>,
}

/// Read a references CSV; errors name the line.
pub fn read_references(path: &Path) -> Result<Vec<Reference>, CampaignError> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| CampaignError::Other(format!("{}: {e}", path.display())))?;
    let mut out = Vec::new();
    let mut rdr = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .trim(csv::Trim::All)
        .flexible(true)
        .from_reader(text.as_bytes());
    for (k, rec) in rdr.records().enumerate() {
        let line = k + 2;
        let bad = |m: &str| CampaignError::Other(format!("{}:{line}: {m}", path.display()));
        let rec = rec.map_err(|e| bad(&e.to_string()))?;
        let num = |i: usize| -> Result<Option<f64>, CampaignError> {
            match rec.get(i).filter(|s| !s.is_empty()) {
                None => Ok(None),
                Some(s) => s
                    .parse::<f64>()
                    .map(Some)
                    .map_err(|_| bad(&format!("column {}: '{s}' is not a number", i + 1))),
            }
        };
        let (Some(name), Some(smiles)) = (rec.get(0), rec.get(1)) else {
            return Err(bad(
                "expected name,smiles[,measured_delta_est_ev,measured_pl_peak_nm]",
            ));
        };
        out.push(Reference {
            name: name.to_string(),
            smiles: smiles.to_string(),
            measured_delta_est_ev: num(2)?,
            measured_pl_peak_nm: num(3)?,
        });
    }
    Ok(out)
}

fn drawing_of(smiles: &str, rec: &serde_json::Value) -> Option<Drawing> {
    let nums = |k: &str| -> Vec<f64> {
        rec[k]
            .as_array()
            .map(|a| a.iter().filter_map(|x| x.as_f64()).collect())
            .unwrap_or_default()
    };
    Drawing::from_smiles(
        smiles,
        &nums("s1_hole_by_atom"),
        &nums("s1_electron_by_atom"),
    )
    .ok()
}

fn torsion_of(rec: &serde_json::Value) -> Vec<Vec<(f64, f64)>> {
    rec["links"]
        .as_array()
        .map(|links| {
            links
                .iter()
                .map(|l| {
                    l["scan"]
                        .as_array()
                        .map(|s| {
                            s.iter()
                                .filter_map(|p| Some((p[0].as_f64()?, p[1].as_f64()?)))
                                .collect()
                        })
                        .unwrap_or_default()
                })
                .collect()
        })
        .unwrap_or_default()
}

/// Assemble the report data.
pub fn report_data(
    out: &ShortlistOutcome,
    settings: &ShortlistSettings,
    rs: &ReportSettings,
    references: &[Reference],
    provenance: Vec<String>,
) -> Result<ReportData, CampaignError> {
    let target = settings
        .rank
        .filters
        .colour_target
        .as_deref()
        .and_then(|t| crate::colour::parse_target(t).ok())
        .map(|(name, xy)| TargetMark {
            name,
            xy,
            // The u′v′ tolerance drawn as a circle of about the same size in xy (1.5× at
            // blue, a display approximation).
            radius_xy: settings.rank.filters.colour_max_delta_uv.unwrap_or(0.02) * 1.5,
        });
    let mut rows = Vec::new();
    // Ranked candidates first (kept, best first), then the rejected ones, capped.
    let mut order: Vec<usize> = out.ranking.order.clone();
    order.extend((0..out.rows.len()).filter(|i| !out.ranking.rows[*i].kept));
    if rs.max_rows > 0 {
        order.truncate(rs.max_rows);
    }
    for &i in &order {
        let (s, inf, rk) = (&out.rows[i], &out.info[i], &out.ranking.rows[i]);
        let v = |u: Option<crate::rank::Uncertain>| u.map_or(f64::NAN, |u| u.value);
        let pick = out.picks.iter().position(|&p| p == i);
        let plan = pick.and_then(|k| out.plans[k].as_ref());
        rows.push(ReportRow {
            candidate_id: s.candidate_id.clone(),
            name: String::new(),
            canonical_smiles: inf.canonical_smiles.clone(),
            s1_ev: inf.s1_ev,
            t1_ev: inf.t1_ev,
            delta_est_ev: v(s.delta_est_ev),
            osc_strength: v(s.osc_strength),
            calibrated: inf.calibrated.map(|c| CalibratedView {
                s1_ev: c.s1_ev,
                delta_est_ev: c.delta_est_ev,
                osc_strength: c.osc_strength,
                out_of_domain: c.out_of_domain,
            }),
            log10_k_risc: inf.log10_k_risc,
            cie_x: s.cie_xy.map_or(f64::NAN, |c| c.0),
            cie_y: s.cie_xy.map_or(f64::NAN, |c| c.1),
            peak_nm: inf.peak_nm,
            score: rk.desirability.unwrap_or(0.0),
            front: rk.front.map_or(0, |f| f as usize + 1),
            shortlisted: pick.is_some(),
            reference: false,
            rejected: rk
                .rejections
                .iter()
                .map(|r| r.reason.as_str().to_string())
                .collect(),
            effort: plan.map(|p| p.effort.total),
            couplings: plan.map_or(String::new(), |p| {
                p.steps
                    .iter()
                    .map(|st| format!("{} ×{}", st.class.as_str(), st.bonds.len()))
                    .collect::<Vec<_>>()
                    .join("; ")
            }),
            flags: s.flags.clone(),
        });
    }
    // Reference emitters, estimated here.
    let ppp = crate::pi::params::PppParams::default_set();
    let (rates, band) = (
        crate::photophysics::RateParams::default(),
        crate::photophysics::BandParams::default(),
    );
    for r in references {
        let est = crate::chem::parse_smiles(&r.smiles)
            .map_err(|e| e.to_string())
            .and_then(|m| {
                crate::pi::estimate::estimate(&m, &ppp, &Default::default())
                    .map_err(|e| e.to_string())
            })
            .map_err(|e| CampaignError::Other(format!("reference '{}': {e}", r.name)))?;
        let a = crate::photophysics::assess(&est, &rates, &band);
        let canonical = crate::chem::canonical_smiles(
            &crate::chem::parse_smiles(&r.smiles)
                .map_err(|e| CampaignError::Other(e.to_string()))?,
        );
        let mut notes = Vec::new();
        if let Some(d) = r.measured_delta_est_ev {
            notes.push(format!("measured ΔEST {d:.3} eV"));
        }
        if let Some(p) = r.measured_pl_peak_nm {
            notes.push(format!("measured PL peak {p:.0} nm"));
        }
        rows.push(ReportRow {
            candidate_id: crate::chem::candidate_id(&canonical),
            name: if notes.is_empty() {
                r.name.clone()
            } else {
                format!("{} ({})", r.name, notes.join(", "))
            },
            canonical_smiles: canonical,
            s1_ev: est.s1_ev,
            t1_ev: est.t1_ev,
            delta_est_ev: est.delta_est_ev,
            osc_strength: est.f_s1,
            calibrated: None,
            log10_k_risc: if a.rates_effective.k_risc > 0.0 {
                a.rates_effective.k_risc.log10()
            } else {
                f64::NEG_INFINITY
            },
            cie_x: a.colour.as_ref().map_or(f64::NAN, |c| c.x),
            cie_y: a.colour.as_ref().map_or(f64::NAN, |c| c.y),
            peak_nm: a.colour.as_ref().map_or(f64::NAN, |c| c.peak_nm),
            score: 0.0,
            front: 0,
            shortlisted: false,
            reference: true,
            rejected: Vec::new(),
            effort: None,
            couplings: String::new(),
            flags: est.flags.clone(),
        });
    }
    let mut shortlist = Vec::new();
    for (k, &i) in out.picks.iter().enumerate() {
        let inf = &out.info[i];
        let rk = &out.ranking.rows[i];
        let mut notes = vec![format!(
            "rank {} of {} kept; Pareto front {}; desirability {:.3}; P(pass all filters) {:.2}",
            rk.position.map_or(0, |p| p + 1),
            out.ranking.order.len(),
            rk.front.map_or(0, |f| f + 1),
            rk.desirability.unwrap_or(0.0),
            rk.pass_probability
        )];
        if let Some(c) = &inf.calibrated {
            notes.push(format!(
                "calibrated ({}): S1 {:.2} [{:.2}, {:.2}] eV, ΔEST {:.3} [{:.3}, {:.3}] eV{}",
                inf.calibration.as_deref().unwrap_or(""),
                c.s1_ev.0,
                c.s1_ev.1,
                c.s1_ev.2,
                c.delta_est_ev.0,
                c.delta_est_ev.1,
                c.delta_est_ev.2,
                if c.out_of_domain {
                    "; outside the calibration's domain"
                } else {
                    ""
                }
            ));
        }
        if let Some(p) = &out.plans[k] {
            for b in &p.bonds {
                notes.push(format!(
                    "bond {}–{} ({} – {}): {}{}",
                    b.atoms.0,
                    b.atoms.1,
                    b.fragment_ids.0,
                    b.fragment_ids.1,
                    b.class.as_str(),
                    if b.alternatives.is_empty() {
                        String::new()
                    } else {
                        format!(
                            " (alternatives: {})",
                            b.alternatives
                                .iter()
                                .map(|a| a.as_str())
                                .collect::<Vec<_>>()
                                .join(", ")
                        )
                    }
                ));
            }
            notes.push(format!(
                "effort {:.1} ({} coupling step(s), {} fragment(s) off the shelf)",
                p.effort.total, p.effort.steps, p.effort.off_shelf
            ));
            for c in &p.cautions {
                notes.push(format!("caution: {}", c.text));
            }
        }
        for f in &out.rows[i].flags {
            notes.push(format!("flag: {f}"));
        }
        shortlist.push(ShortlistDetail {
            candidate_id: inf.candidate_id.clone(),
            title: format!(
                "{} · {}",
                &inf.candidate_id[..12.min(inf.candidate_id.len())],
                inf.canonical_smiles
            ),
            torsion: torsion_of(&out.pick_records[k]),
            drawing: drawing_of(&inf.canonical_smiles, &out.pick_records[k]),
            notes,
        });
    }
    let mut parameters = vec![
        (
            "shortlist".to_string(),
            serde_json::to_string(settings).expect("serialisable"),
        ),
        (
            "report".to_string(),
            serde_json::to_string(rs).expect("serialisable"),
        ),
    ];
    if let Some(i) = out.info.first() {
        parameters.push((
            "estimate parameter hash".into(),
            i.estimate_param_hash.clone(),
        ));
    }
    if let Some(r) = out.pick_records.first() {
        parameters.push((
            "rate and band settings".into(),
            r["photophysics"]["rate_params"].to_string()
                + " "
                + &r["photophysics"]["band"].to_string(),
        ));
    }
    let mut cautions: Vec<String> = CAUTIONS.iter().map(|s| s.to_string()).collect();
    cautions.push(crate::synth::GENERAL_NOTICE.to_string());
    Ok(ReportData {
        title: rs.title.clone(),
        provenance,
        parameters,
        target,
        rows,
        shortlist,
        cautions,
        banner: rs.banner.clone(),
    })
}

/// Write `report.html`, `shortlist.csv`, `shortlist.json` and `shortlist.sdf` into `dir`.
pub fn write_report(
    dir: &Path,
    data: &ReportData,
    out: &ShortlistOutcome,
) -> Result<Vec<PathBuf>, CampaignError> {
    let io = |p: &Path, e: std::io::Error| CampaignError::Other(format!("{}: {e}", p.display()));
    std::fs::create_dir_all(dir).map_err(|e| io(dir, e))?;
    let html = page(data).map_err(|e| CampaignError::Other(format!("report: {e}")))?;
    let mut written = Vec::new();
    let p = dir.join("report.html");
    std::fs::write(&p, html).map_err(|e| io(&p, e))?;
    written.push(p);
    let short: Vec<&ReportRow> = data.rows.iter().filter(|r| r.shortlisted).collect();
    // CSV.
    let p = dir.join("shortlist.csv");
    let mut w = csv::Writer::from_path(&p)
        .map_err(|e| CampaignError::Other(format!("{}: {e}", p.display())))?;
    let csv_err = |e: csv::Error| CampaignError::Other(format!("shortlist.csv: {e}"));
    w.write_record([
        "position",
        "candidate_id",
        "canonical_smiles",
        "s1_ev",
        "t1_ev",
        "delta_est_ev",
        "osc_strength",
        "calibrated_s1_ev",
        "calibrated_delta_est_ev",
        "log10_k_risc_per_s",
        "cie_x",
        "cie_y",
        "peak_nm",
        "desirability",
        "front",
        "effort",
        "couplings",
    ])
    .map_err(csv_err)?;
    for (k, r) in short.iter().enumerate() {
        let f = |x: f64| {
            if x.is_finite() {
                format!("{x:.6}")
            } else {
                String::new()
            }
        };
        w.write_record([
            (k + 1).to_string(),
            r.candidate_id.clone(),
            r.canonical_smiles.clone(),
            f(r.s1_ev),
            f(r.t1_ev),
            f(r.delta_est_ev),
            f(r.osc_strength),
            r.calibrated
                .as_ref()
                .map_or(String::new(), |c| f(c.s1_ev.0)),
            r.calibrated
                .as_ref()
                .map_or(String::new(), |c| f(c.delta_est_ev.0)),
            f(r.log10_k_risc),
            f(r.cie_x),
            f(r.cie_y),
            f(r.peak_nm),
            f(r.score),
            r.front.to_string(),
            r.effort.map_or(String::new(), f),
            r.couplings.clone(),
        ])
        .map_err(csv_err)?;
    }
    w.flush().map_err(|e| io(&p, e))?;
    written.push(p);
    // JSON (rows plus synthesis plans and cautions).
    let p = dir.join("shortlist.json");
    let json = serde_json::json!({
        "cautions": data.cautions,
        "shortlist": short.iter().zip(&out.plans).map(|(r, plan)| serde_json::json!({
            "row": r, "synthesis": plan,
        })).collect::<Vec<_>>(),
    });
    std::fs::write(
        &p,
        serde_json::to_string_pretty(&json).expect("serialisable"),
    )
    .map_err(|e| io(&p, e))?;
    written.push(p);
    // SDF with properties, geometry from the estimate's equilibrium twist.
    let p = dir.join("shortlist.sdf");
    let mut sdf = String::new();
    for (k, &i) in out.picks.iter().enumerate() {
        let inf = &out.info[i];
        let Ok(mol) = crate::chem::parse_smiles(&inf.canonical_smiles) else {
            continue;
        };
        let geom: Vec<[f64; 3]> = out.pick_records[k]["geometry"]
            .as_array()
            .map(|a| {
                a.iter()
                    .filter_map(|p| Some([p[0].as_f64()?, p[1].as_f64()?, p[2].as_f64()?]))
                    .collect()
            })
            .unwrap_or_default();
        let coords = if geom.len() == mol.atom_count() {
            crate::geometry::Coordinates { points: geom }
        } else {
            crate::geometry::layout(&mol)
        };
        let (mh, ch) = crate::geometry::with_hydrogens(&mol, &coords);
        let r = short.get(k);
        let mut props = vec![
            ("candidate_id".to_string(), inf.candidate_id.clone()),
            ("canonical_smiles".to_string(), inf.canonical_smiles.clone()),
            ("shortlist_position".to_string(), (k + 1).to_string()),
        ];
        if let Some(r) = r {
            props.push(("s1_ev".into(), format!("{:.4}", r.s1_ev)));
            props.push(("delta_est_ev".into(), format!("{:.4}", r.delta_est_ev)));
            props.push(("osc_strength".into(), format!("{:.5}", r.osc_strength)));
            props.push(("desirability".into(), format!("{:.4}", r.score)));
        }
        sdf.push_str(&crate::geometry::sdf_block(
            &mh,
            &ch,
            &inf.candidate_id,
            &props
                .iter()
                .map(|(a, b)| (a.as_str(), b.clone()))
                .collect::<Vec<_>>(),
        ));
    }
    std::fs::write(&p, sdf).map_err(|e| io(&p, e))?;
    written.push(p);
    Ok(written)
}
