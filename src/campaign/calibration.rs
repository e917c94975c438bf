//! Calibration and next-batch suggestion on a campaign store: gathers the matched imported
//! results and the π-tier estimates, fits [`crate::calibrate`] per kind, stores the fit and
//! applies it to every estimated candidate (stage `calibrated`, raw and calibrated side by
//! side); picks the next batch to compute ([`crate::calibrate::suggest()`]).
//!
//! Observed values per (candidate, kind), from `qc_states` rows matched to the candidate:
//! - state kinds (vertical absorption/emission, adiabatic, 0–0, measured peaks and onsets):
//!   S1 = the lowest singlet (multiplicity 1; for the measured kinds a row without a
//!   multiplicity counts as the singlet), T1 = the lowest triplet, ΔEST = S1 − T1 when both
//!   exist, f = the oscillator strength of that S1 when given;
//! - gap kinds (`delta_est`, `measured_delta_est_77k`, `measured_delta_est_rt`): ΔEST only.
//!   A gap row joins the calibration of its own kind.
//!
//! Raw values are the estimate's equilibrium-twist S1, ΔEST and f (what a vertical TD-DFT at
//! one geometry compares with); descriptors are HOMO, LUMO, HOMO–LUMO overlap, S1 CT number,
//! mean twist/90° and the correction applied to S1 (raw CIS − corrected), all from the stored
//! record. Groups are the candidate's fragment ids (from its tuples).

use std::collections::{BTreeMap, HashMap};

use rusqlite::{OptionalExtension, params};
use serde::Serialize;

use super::error::CampaignError;
use super::store::Store;
use crate::calibrate::{
    CalPoint, CalibrateParams, Calibrated, Calibration, ObservedValues, RawValues, fit,
};

/// π-tier values of one estimate record used by calibration and suggestion.
#[derive(Debug, Clone)]
pub struct EstimateView {
    pub candidate_id: String,
    pub canonical_smiles: String,
    pub param_hash: String,
    pub raw: RawValues,
    pub s1_ev: f64,
    pub delta_est_ev: f64,
    pub f: f64,
    pub descriptors: Vec<f64>,
}

/// Number of descriptors [`EstimateView::descriptors`] holds.
pub const N_DESCRIPTORS: usize = 6;

fn view(id: &str, smi: &str, hash: &str, v: &serde_json::Value) -> Option<EstimateView> {
    let g = |k: &str| v[k].as_f64();
    let (s1, dest, f) = (g("s1_ev")?, g("delta_est_ev")?, g("osc_strength")?);
    let twists: Vec<f64> = v["twists_deg"]
        .as_array()
        .map(|a| a.iter().filter_map(|x| x.as_f64()).collect())
        .unwrap_or_default();
    let mean_twist = if twists.is_empty() {
        0.0
    } else {
        twists
            .iter()
            .map(|t| t.abs().min(180.0 - t.abs()))
            .sum::<f64>()
            / twists.len() as f64
    };
    let descriptors = vec![
        g("homo_ev")?,
        g("lumo_ev")?,
        g("homo_lumo_overlap")?,
        g("s1_ct_number").unwrap_or(0.0),
        mean_twist / 90.0,
        g("raw_s1_ev").map_or(0.0, |r| r - s1),
    ];
    if !(s1.is_finite() && dest.is_finite() && f.is_finite())
        || descriptors.iter().any(|d| !d.is_finite())
    {
        return None;
    }
    Some(EstimateView {
        candidate_id: id.to_string(),
        canonical_smiles: smi.to_string(),
        param_hash: hash.to_string(),
        raw: RawValues::new(s1, dest, f),
        s1_ev: s1,
        delta_est_ev: dest,
        f,
        descriptors,
    })
}

/// The estimate records of the store under one parameter hash (default: the hash with most
/// records), one view per candidate. Returns the hash used and the views.
pub fn estimate_views(
    store: &Store,
    param_hash: Option<&str>,
) -> Result<(String, Vec<EstimateView>), CampaignError> {
    let other = |e: String| CampaignError::Other(format!("{}: {e}", store.path.display()));
    let hash = match param_hash {
        Some(h) => h.to_string(),
        None => dominant_estimate_hash(store)?,
    };
    let mut out = Vec::new();
    crate::report::for_each_estimate(store.connection(), |id, smi, h, v| {
        if h == hash
            && let Some(x) = view(id, smi, h, v)
        {
            out.push(x);
        }
        Ok(())
    })
    .map_err(other)?;
    Ok((hash, out))
}

/// The estimate parameter hash with the most records (ties: the smaller hash): the store's
/// main estimate, which calibration, suggestion and the shortlist work on.
pub fn dominant_estimate_hash(store: &Store) -> Result<String, CampaignError> {
    store
        .connection()
        .query_row(
            "SELECT param_hash FROM results WHERE stage = 'estimate'
             GROUP BY param_hash ORDER BY count(*) DESC, param_hash LIMIT 1",
            [],
            |r| r.get::<_, String>(0),
        )
        .map_err(|_| {
            CampaignError::Other(format!(
                "{}: no estimate results in the store (run the estimate stage)",
                store.path.display()
            ))
        })
}

/// The newest applied calibration of each candidate made on the estimates of
/// `estimate_hash`: candidate id → (stage key `kind:id`, record).
pub fn calibrated_records(
    store: &Store,
    estimate_hash: &str,
) -> Result<HashMap<String, (String, serde_json::Value)>, CampaignError> {
    let sq = CampaignError::sqlite(&store.path);
    let mut st = store
        .connection()
        .prepare(
            "SELECT candidate_id, param_hash, data FROM results WHERE stage = ?1
             ORDER BY CAST(json_extract(data, '$.calibration_id') AS INTEGER)",
        )
        .map_err(&sq)?;
    let mut rows = st.query([CALIBRATED_STAGE]).map_err(&sq)?;
    let mut out = HashMap::new();
    while let Some(r) = rows.next().map_err(&sq)? {
        let id: String = r.get(0).map_err(&sq)?;
        let key: String = r.get(1).map_err(&sq)?;
        let data: String = r.get(2).map_err(&sq)?;
        if let Ok(v) = serde_json::from_str::<serde_json::Value>(&data)
            && v["estimate_param_hash"] == estimate_hash
        {
            out.insert(id, (key, v));
        }
    }
    Ok(out)
}

/// Fragment ids of every candidate (from its tuples), sorted, repeats kept per tuple.
pub fn fragment_groups(store: &Store) -> Result<HashMap<String, Vec<String>>, CampaignError> {
    let sq = CampaignError::sqlite(&store.path);
    let mut st = store
        .connection()
        .prepare(
            "SELECT candidate_id, fragments FROM tuples WHERE candidate_id IS NOT NULL
             ORDER BY candidate_id, tuple_key",
        )
        .map_err(&sq)?;
    let mut rows = st.query([]).map_err(&sq)?;
    let mut out: HashMap<String, Vec<String>> = HashMap::new();
    while let Some(r) = rows.next().map_err(&sq)? {
        let id: String = r.get(0).map_err(&sq)?;
        let frags: String = r.get(1).map_err(&sq)?;
        out.entry(id).or_insert_with(|| {
            let mut v: Vec<String> = frags.split(',').map(str::to_string).collect();
            v.sort();
            v
        });
    }
    Ok(out)
}

fn is_gap_kind(kind: &str) -> bool {
    matches!(
        kind,
        "delta_est" | "measured_delta_est_77k" | "measured_delta_est_rt"
    )
}

/// Observed values per (kind, candidate) from the matched imported rows.
pub fn observations(
    store: &Store,
) -> Result<BTreeMap<String, BTreeMap<String, ObservedValues>>, CampaignError> {
    let sq = CampaignError::sqlite(&store.path);
    let mut st = store
        .connection()
        .prepare(
            "SELECT candidate_id, kind, multiplicity, energy_ev, osc_strength FROM qc_states
             WHERE match_status = 'matched' ORDER BY candidate_id, kind, energy_ev",
        )
        .map_err(&sq)?;
    let mut rows = st.query([]).map_err(&sq)?;
    let mut out: BTreeMap<String, BTreeMap<String, ObservedValues>> = BTreeMap::new();
    while let Some(r) = rows.next().map_err(&sq)? {
        let id: String = r.get(0).map_err(&sq)?;
        let kind: String = r.get(1).map_err(&sq)?;
        let mult: Option<i64> = r.get(2).map_err(&sq)?;
        let e: f64 = r.get(3).map_err(&sq)?;
        let f: Option<f64> = r.get(4).map_err(&sq)?;
        let o = out.entry(kind.clone()).or_default().entry(id).or_default();
        if is_gap_kind(&kind) {
            o.delta_est_ev.get_or_insert(e);
            continue;
        }
        let singlet = mult == Some(1) || (mult.is_none() && kind.starts_with("measured"));
        // Rows come sorted by energy: the first singlet / triplet is the lowest.
        if singlet && o.s1_ev.is_none() {
            o.s1_ev = Some(e);
            o.f = f;
        } else if mult == Some(3) && o.delta_est_ev.is_none() {
            // Temporarily hold T1 in delta_est_ev; turned into S1 − T1 below.
            o.delta_est_ev = Some(e);
        }
    }
    for (kind, m) in out.iter_mut() {
        if is_gap_kind(kind) {
            continue;
        }
        for o in m.values_mut() {
            o.delta_est_ev = match (o.s1_ev, o.delta_est_ev) {
                (Some(s1), Some(t1)) => Some(s1 - t1),
                _ => None,
            };
        }
    }
    Ok(out)
}

/// What `calibrate` did for one kind.
#[derive(Debug, Clone, Serialize)]
pub struct KindOutcome {
    pub kind: String,
    pub n_points: usize,
    /// The stored calibration id, or why none was fitted.
    pub calibration_id: Option<i64>,
    pub error: Option<String>,
    pub calibration: Option<Calibration>,
    /// Candidates the calibration was applied to.
    pub applied: usize,
}

/// Fit one calibration per kind found among the matched imported results (or only `kind`),
/// store each fit and apply it to every estimated candidate.
pub fn calibrate_store(
    store: &mut Store,
    kind: Option<&str>,
    param_hash: Option<&str>,
    params: &CalibrateParams,
) -> Result<Vec<KindOutcome>, CampaignError> {
    let (hash, views) = estimate_views(store, param_hash)?;
    let groups = fragment_groups(store)?;
    let obs = observations(store)?;
    if obs.is_empty() {
        return Err(CampaignError::Other(format!(
            "{}: no matched imported results to calibrate on (run `ingest` first)",
            store.path.display()
        )));
    }
    let by_id: HashMap<&str, &EstimateView> =
        views.iter().map(|v| (v.candidate_id.as_str(), v)).collect();
    let mut outcomes = Vec::new();
    for (k, cands) in &obs {
        if kind.is_some_and(|want| want != k) {
            continue;
        }
        let points: Vec<CalPoint> = cands
            .iter()
            .filter_map(|(id, o)| {
                let v = by_id.get(id.as_str())?;
                Some(CalPoint {
                    candidate_id: id.clone(),
                    groups: groups.get(id).cloned().unwrap_or_default(),
                    raw: v.raw,
                    descriptors: v.descriptors.clone(),
                    observed: *o,
                    kind: k.clone(),
                })
            })
            .collect();
        let n_points = points.len();
        match fit(&points, params) {
            Ok(cal) => {
                let id = store_and_apply(store, &cal, &hash, &views, &groups)?;
                outcomes.push(KindOutcome {
                    kind: k.clone(),
                    n_points,
                    calibration_id: Some(id),
                    error: None,
                    applied: views.len(),
                    calibration: Some(cal),
                });
            }
            Err(e) => outcomes.push(KindOutcome {
                kind: k.clone(),
                n_points,
                calibration_id: None,
                error: Some(e.to_string()),
                calibration: None,
                applied: 0,
            }),
        }
    }
    if outcomes.is_empty()
        && let Some(k) = kind
    {
        return Err(CampaignError::Other(format!(
            "no matched imported results of kind '{k}' (kinds present: {})",
            obs.keys().cloned().collect::<Vec<_>>().join(", ")
        )));
    }
    Ok(outcomes)
}

/// The stage key of applied calibrations: `calibrated`, param hash = `<kind>:<calibration id>`.
pub const CALIBRATED_STAGE: &str = "calibrated";

fn store_and_apply(
    store: &mut Store,
    cal: &Calibration,
    estimate_hash: &str,
    views: &[EstimateView],
    groups: &HashMap<String, Vec<String>>,
) -> Result<i64, CampaignError> {
    let spath = store.path.clone();
    let tx = store
        .connection_mut()
        .transaction()
        .map_err(CampaignError::sqlite(&spath))?;
    let target = |t: &Option<crate::calibrate::TargetFit>| {
        t.as_ref().map(
            |t| serde_json::json!({"cv": t.cv, "family": t.family, "half_width": t.half_width}),
        )
    };
    let report = serde_json::json!({
        "estimate_param_hash": estimate_hash,
        "s1": target(&cal.s1), "delta_est": target(&cal.delta_est),
        "log10_f": target(&cal.log10_f),
        "t1": cal.t1.as_ref().map(|t| serde_json::json!({"cv": t.cv, "half_width": t.half_width})),
        "skipped": cal.skipped,
    });
    // The same fit again (same data, same settings) reuses its id: re-running a workflow does
    // not pile up identical calibrations.
    let model_json = serde_json::to_string(cal).expect("serialisable");
    let existing: Option<i64> = tx
        .query_row(
            "SELECT calibration_id FROM calibrations WHERE kind = ?1 AND model_json = ?2",
            params![cal.kind, model_json],
            |r| r.get(0),
        )
        .optional()
        .map_err(CampaignError::sqlite(&spath))?;
    let cal_id = match existing {
        Some(id) => id,
        None => {
            tx.execute(
                "INSERT INTO calibrations(kind, created_utc, n_points, model_json, report_json)
                 VALUES (?1, ?2, ?3, ?4, ?5)",
                params![
                    cal.kind,
                    super::store::now_utc(),
                    cal.n_points as i64,
                    model_json,
                    report.to_string()
                ],
            )
            .map_err(CampaignError::sqlite(&spath))?;
            tx.last_insert_rowid()
        }
    };
    let key = format!("{}:{cal_id}", cal.kind);
    {
        let mut ins = tx
            .prepare(
                "INSERT OR REPLACE INTO results(candidate_id, stage, param_hash, data)
                 VALUES (?1, ?2, ?3, ?4)",
            )
            .map_err(CampaignError::sqlite(&spath))?;
        let empty = Vec::new();
        for v in views {
            let g = groups.get(&v.candidate_id).unwrap_or(&empty);
            let Ok(c) = cal.predict(&v.raw, &v.descriptors, g) else {
                continue;
            };
            let data = calibrated_record(cal_id, &cal.kind, estimate_hash, v, &c);
            ins.execute(params![v.candidate_id, CALIBRATED_STAGE, key, data])
                .map_err(CampaignError::sqlite(&spath))?;
        }
    }
    tx.commit().map_err(CampaignError::sqlite(&spath))?;
    Ok(cal_id)
}

fn calibrated_record(
    cal_id: i64,
    kind: &str,
    estimate_hash: &str,
    v: &EstimateView,
    c: &Calibrated,
) -> String {
    let iv = |i: &Option<crate::calibrate::Interval>| {
        i.map(|i| serde_json::json!([i.value, i.lo, i.hi]))
    };
    serde_json::json!({
        "calibration_id": cal_id,
        "kind": kind,
        "estimate_param_hash": estimate_hash,
        "raw": {"s1_ev": v.s1_ev, "delta_est_ev": v.delta_est_ev, "osc_strength": v.f},
        "s1_ev": iv(&c.s1_ev),
        "delta_est_ev": iv(&c.delta_est_ev),
        "t1_ev": iv(&c.t1_ev),
        "osc_strength": iv(&c.f),
        "out_of_domain": c.out_of_domain,
    })
    .to_string()
}

/// Prior uncertainties (eV / decades) of the uncalibrated π tier used by `suggest` before any
/// calibration exists: a choice of this tool, of the size of the π tier's validation errors
/// (DEVELOPERS.md, "The π tier"): σ(ΔEST) 0.15 eV, σ(log10 f) 0.5.
pub const PRIOR_SIGMA_DEST_EV: f64 = 0.15;
pub const PRIOR_SIGMA_LOG10_F: f64 = 0.5;

/// Normal quantile of a two-sided 90 % interval (1.645), to turn half-widths into σ.
const Z90: f64 = 1.644_853_626_951_472_2;

/// One suggested candidate.
#[derive(Debug, Clone, Serialize)]
pub struct SuggestedCandidate {
    pub candidate_id: String,
    pub canonical_smiles: String,
    /// Objective μ: log10 k_TADF (s⁻¹) from S1, ΔEST and f (calibrated where a calibration
    /// exists), σ its uncertainty, score = μ + β σ.
    pub mu: f64,
    pub sigma: f64,
    pub score: f64,
    pub calibrated: bool,
    pub out_of_domain: bool,
}

/// Pick the next batch to compute: every estimated candidate without a matched imported
/// result is in the pool; objective μ = log10 k_TADF ([`crate::photophysics::log10_tadf_rate`],
/// refractive index 1.7 and 300 K, the rate-model defaults) from the newest calibration's
/// values where one exists, else the raw π tier; σ from the calibration's 90 % half-widths of
/// ΔEST and log10 f (σ = hw/1.645, combined as independent:
/// σ_μ² = (σ_ΔEST/(k_BT ln10))² + σ_log f²), doubled outside the applicability domain (a
/// choice of this tool: unseen fragments are where a computation teaches most), or the
/// priors above without a calibration. Diversity: no pick above `params.max_similarity`
/// Tanimoto (ECFP4-like, 2048 bits) to a computed or already picked candidate.
pub fn suggest_batch(
    store: &Store,
    params: &crate::calibrate::suggest::SuggestParams,
) -> Result<Vec<SuggestedCandidate>, CampaignError> {
    use crate::calibrate::suggest::{PoolCandidate, suggest};
    use crate::chem::{FingerprintParams, circular_fingerprint, parse_smiles};
    let rates = crate::photophysics::RateParams::default();
    let kt_ln10 = crate::photophysics::K_B_EV * rates.temperature_k * std::f64::consts::LN_10;
    let (hash, views) = estimate_views(store, None)?;
    let other = |e: String| CampaignError::Other(format!("{}: {e}", store.path.display()));
    // Computed candidates: any matched imported row.
    let mut computed_ids: Vec<String> = {
        let mut st = store
            .connection()
            .prepare("SELECT DISTINCT candidate_id FROM qc_states WHERE match_status = 'matched'")
            .map_err(|e| other(e.to_string()))?;
        st.query_map([], |r| r.get::<_, String>(0))
            .map_err(|e| other(e.to_string()))?
            .filter_map(Result::ok)
            .collect()
    };
    computed_ids.sort();
    // Newest calibrated record per candidate.
    let cal: HashMap<String, serde_json::Value> = calibrated_records(store, &hash)?
        .into_iter()
        .map(|(id, (_, v))| (id, v))
        .collect();
    let fpp = FingerprintParams::default();
    let fp_of = |smi: &str| {
        parse_smiles(smi)
            .ok()
            .map(|m| circular_fingerprint(&m, fpp))
    };
    let mut computed_fps = Vec::new();
    let mut pool = Vec::new();
    let mut meta = Vec::new();
    for v in &views {
        let Some(fp) = fp_of(&v.canonical_smiles) else {
            continue;
        };
        if computed_ids.binary_search(&v.candidate_id).is_ok() {
            computed_fps.push(fp);
            continue;
        }
        // Per target: the calibrated value and σ where the calibration has them, else the raw
        // value and the prior σ.
        let c = cal.get(&v.candidate_id);
        let iv = |k: &str| -> Option<(f64, f64, f64)> {
            let a = &c?[k];
            Some((a[0].as_f64()?, a[1].as_f64()?, a[2].as_f64()?))
        };
        let lf = |x: f64| (x.max(0.0) + crate::calibrate::F_FLOOR).log10();
        let s1 = iv("s1_ev").map_or(v.s1_ev, |t| t.0);
        let (dest, sd) = iv("delta_est_ev").map_or((v.delta_est_ev, PRIOR_SIGMA_DEST_EV), |t| {
            (t.0, (t.2 - t.1) / 2.0 / Z90)
        });
        let (f, sf) = iv("osc_strength").map_or((v.f, PRIOR_SIGMA_LOG10_F), |t| {
            (t.0, (lf(t.2) - lf(t.1)) / 2.0 / Z90)
        });
        let calibrated = c.is_some();
        let ood = c.is_some_and(|c| c["out_of_domain"].as_bool().unwrap_or(false));
        let mu = crate::photophysics::log10_tadf_rate(
            s1,
            dest,
            f,
            rates.refractive_index,
            rates.temperature_k,
        );
        let mut sigma = ((sd / kt_ln10).powi(2) + sf.powi(2)).sqrt();
        if ood {
            sigma *= 2.0;
        }
        pool.push(PoolCandidate {
            mean: mu,
            sigma,
            fingerprint: fp,
        });
        meta.push((v, mu, sigma, calibrated, ood));
    }
    let picks = suggest(&pool, &computed_fps, params).map_err(|e| other(e.to_string()))?;
    Ok(picks
        .into_iter()
        .map(|s| {
            let (v, mu, sigma, calibrated, ood) = meta[s.index];
            SuggestedCandidate {
                candidate_id: v.candidate_id.clone(),
                canonical_smiles: v.canonical_smiles.clone(),
                mu,
                sigma,
                score: s.score,
                calibrated,
                out_of_domain: ood,
            }
        })
        .collect())
}
