//! The shortlist on a campaign store: stored estimates (calibrated values and their intervals
//! where a calibration exists) → [`crate::rank`] rows → filters, Pareto fronts, desirability
//! → MaxMin diversity on fingerprints with a cap per fragment → [`crate::synth`] plan of each
//! pick. Where a calibration moved S1, the emission colour is rebuilt from the calibrated S1
//! with the estimate's Stokes shift and band width. Results are stored as stage `shortlist` (param hash of the settings), one row per
//! ranked candidate: pass probability, rejections with reason codes, front, desirability,
//! position, and for picks their place in the shortlist and synthesis plan.

use std::collections::HashMap;

use rusqlite::params;
use serde::{Deserialize, Serialize};

use super::calibration::{calibrated_records, dominant_estimate_hash, fragment_groups};
use super::error::CampaignError;
use super::store::Store;
use crate::rank::{DiversityParams, PickInput, RankParams, Scored, Uncertain, pick_diverse, rank};
use crate::synth::{EffortParams, SynthPlan};

/// Shortlist settings (the `[shortlist]` section of a workflow).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct ShortlistSettings {
    /// Filters, objectives, desirability terms and confidence.
    pub rank: RankParams,
    /// Shortlist size, similarity ceiling, cap per fragment.
    pub diversity: DiversityParams,
    /// Effort score penalties.
    pub effort: EffortParams,
    /// Use calibrated values (with their intervals) where a calibration exists.
    pub use_calibration: bool,
}

impl Default for ShortlistSettings {
    fn default() -> Self {
        ShortlistSettings {
            rank: RankParams::default(),
            diversity: DiversityParams {
                n_pick: 10,
                ..DiversityParams::default()
            },
            effort: EffortParams::default(),
            use_calibration: true,
        }
    }
}

/// What the report needs of one ranked candidate besides its [`Scored`] row.
#[derive(Debug, Clone, Serialize)]
pub struct RowInfo {
    pub candidate_id: String,
    pub canonical_smiles: String,
    pub estimate_param_hash: String,
    /// The calibration used (kind:id), if any.
    pub calibration: Option<String>,
    /// Calibrated (value, lo, hi) of S1, ΔEST and f, and the out-of-domain flag.
    pub calibrated: Option<CalibratedValues>,
    pub peak_nm: f64,
    pub log10_k_risc: f64,
    pub tuple_key: Option<String>,
    /// Equilibrium-twist S1 and T1 of the π tier (eV), uncalibrated.
    pub s1_ev: f64,
    pub t1_ev: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CalibratedValues {
    pub s1_ev: (f64, f64, f64),
    pub delta_est_ev: (f64, f64, f64),
    pub osc_strength: (f64, f64, f64),
    pub out_of_domain: bool,
}

/// The outcome of [`shortlist`].
#[derive(Debug, Clone, Serialize)]
pub struct ShortlistOutcome {
    pub param_hash: String,
    pub rows: Vec<Scored>,
    pub info: Vec<RowInfo>,
    pub ranking: crate::rank::Ranking,
    /// Row indices of the picks, in shortlist order.
    pub picks: Vec<usize>,
    pub stop: crate::rank::StopReason,
    /// Synthesis plan of each pick (same order as `picks`).
    pub plans: Vec<Option<SynthPlan>>,
    /// The full estimate record of each pick (same order as `picks`; torsion scans, densities,
    /// geometry and rate settings for the report). Only the picks' records are held: a store
    /// of 10^6 candidates would not fit in memory otherwise.
    #[serde(skip)]
    pub pick_records: Vec<serde_json::Value>,
}

/// Level of the calibration intervals (the calibration's coverage, 90 % by default).
const CAL_LEVEL: f64 = 0.9;

/// Rows for ranking: one per candidate with an estimate under the most common estimate
/// parameter hash; calibrated values from the newest calibration when `use_calibration`.
pub fn gather(
    store: &Store,
    use_calibration: bool,
) -> Result<(Vec<Scored>, Vec<RowInfo>), CampaignError> {
    let other = |e: String| CampaignError::Other(format!("{}: {e}", store.path.display()));
    let hash = dominant_estimate_hash(store)?;
    let groups = fragment_groups(store)?;
    let sq = CampaignError::sqlite(&store.path);
    let mut mw: HashMap<String, f64> = HashMap::new();
    let mut tuple_of: HashMap<String, String> = HashMap::new();
    {
        let mut st = store
            .connection()
            .prepare("SELECT id, mol_weight FROM candidates")
            .map_err(&sq)?;
        let mut rows = st.query([]).map_err(&sq)?;
        while let Some(r) = rows.next().map_err(&sq)? {
            mw.insert(r.get(0).map_err(&sq)?, r.get(1).map_err(&sq)?);
        }
        let mut st = store
            .connection()
            .prepare(
                "SELECT candidate_id, tuple_key FROM tuples WHERE candidate_id IS NOT NULL
                 ORDER BY tuple_key",
            )
            .map_err(&sq)?;
        let mut rows = st.query([]).map_err(&sq)?;
        while let Some(r) = rows.next().map_err(&sq)? {
            let id: String = r.get(0).map_err(&sq)?;
            let key: String = r.get(1).map_err(&sq)?;
            tuple_of.entry(id).or_insert(key);
        }
    }
    let cal = if use_calibration {
        calibrated_records(store, &hash)?
    } else {
        HashMap::new()
    };
    let mut rows = Vec::new();
    let mut info = Vec::new();
    crate::report::for_each_estimate(store.connection(), |id, smi, h, v| {
        if h != hash {
            return Ok(());
        }
        let f = |k: &str| v[k].as_f64();
        let ph = &v["photophysics"];
        let exact = |x: Option<f64>| x.filter(|x| x.is_finite()).map(Uncertain::exact);
        let c = cal.get(id);
        let civ = |k: &str| -> Option<(f64, f64, f64)> {
            let a = &c?.1[k];
            Some((a[0].as_f64()?, a[1].as_f64()?, a[2].as_f64()?))
        };
        let calibrated = match (civ("s1_ev"), civ("delta_est_ev"), civ("osc_strength")) {
            (Some(s1), Some(d), Some(fo)) => Some(CalibratedValues {
                s1_ev: s1,
                delta_est_ev: d,
                osc_strength: fo,
                out_of_domain: c.is_some_and(|c| c.1["out_of_domain"] == true),
            }),
            _ => None,
        };
        let unc = |t: Option<(f64, f64, f64)>, fallback: Option<f64>| -> Option<Uncertain> {
            match t {
                Some((v, lo, hi)) => Uncertain::from_interval(v, lo, hi, CAL_LEVEL).ok(),
                None => exact(fallback),
            }
        };
        let t1 = civ("t1_ev");
        // Colour: the stored band, or rebuilt from the calibrated S1 with the same Stokes
        // shift and width when a calibration moved S1.
        let mut cie_xy = match (ph["colour"]["x"].as_f64(), ph["colour"]["y"].as_f64()) {
            (Some(x), Some(y)) => Some((x, y)),
            _ => None,
        };
        let mut peak_nm = ph["colour"]["peak_nm"].as_f64().unwrap_or(f64::NAN);
        if let (Some((s1c, _, _)), Some(stokes), Some(fwhm)) = (
            calibrated.map(|c| c.s1_ev),
            ph["band"]["stokes_shift_ev"].as_f64(),
            ph["band"]["fwhm_ev"].as_f64(),
        ) && let Ok(c) = crate::colour::gaussian_band(s1c - stokes, fwhm)
            .and_then(|b| crate::colour::analyse(&b, crate::colour::D65))
        {
            cie_xy = Some((c.x, c.y));
            peak_nm = c.peak_nm;
        }
        let row = Scored {
            candidate_id: id.to_string(),
            s1_ev: unc(civ("s1_ev"), f("s1_ev")),
            t1_ev: unc(t1, f("t1_ev")),
            delta_est_ev: unc(civ("delta_est_ev"), f("delta_est_ev")),
            osc_strength: unc(civ("osc_strength"), f("osc_strength")),
            k_r_per_s: exact(ph["rates_effective"]["k_r"].as_f64()),
            k_risc_per_s: exact(ph["rates_effective"]["k_risc"].as_f64()),
            s1_minus_3le_ev: exact(f("s1_minus_3le_ev")),
            mol_weight: mw.get(id).copied(),
            cie_xy,
            not_converged: v["flags"].as_array().is_some_and(|a| {
                a.iter()
                    .any(|s| s.as_str().is_some_and(|s| s.contains("did not converge")))
            }),
            flags: v["flags"]
                .as_array()
                .map(|a| {
                    a.iter()
                        .filter_map(|s| s.as_str().map(str::to_string))
                        .collect()
                })
                .unwrap_or_default(),
            fragment_ids: groups.get(id).cloned().unwrap_or_default(),
        };
        rows.push(row);
        info.push(RowInfo {
            candidate_id: id.to_string(),
            canonical_smiles: smi.to_string(),
            estimate_param_hash: h.to_string(),
            calibration: c.map(|c| c.0.clone()),
            calibrated,
            peak_nm,
            log10_k_risc: ph["rates_effective"]["k_risc"]
                .as_f64()
                .map_or(f64::NAN, |k| {
                    if k > 0.0 {
                        k.log10()
                    } else {
                        f64::NEG_INFINITY
                    }
                }),
            tuple_key: tuple_of.get(id).cloned(),
            s1_ev: f("s1_ev").unwrap_or(f64::NAN),
            t1_ev: f("t1_ev").unwrap_or(f64::NAN),
        });
        Ok(())
    })
    .map_err(other)?;
    Ok((rows, info))
}

/// Rank, pick and plan; store the outcome as stage `shortlist`.
pub fn shortlist(
    store: &mut Store,
    lib: &crate::fragments::Library,
    settings: &ShortlistSettings,
) -> Result<ShortlistOutcome, CampaignError> {
    let other = |e: String| CampaignError::Other(format!("shortlist: {e}"));
    let (rows, info) = gather(store, settings.use_calibration)?;
    let ranking = rank(&rows, &settings.rank).map_err(other)?;
    let fpp = crate::chem::FingerprintParams::default();
    let fps: Vec<crate::chem::Fingerprint> = ranking
        .order
        .iter()
        .map(|&i| {
            crate::chem::parse_smiles(&info[i].canonical_smiles)
                .map(|m| crate::chem::circular_fingerprint(&m, fpp))
                .map_err(|e| other(format!("{}: {e}", info[i].candidate_id)))
        })
        .collect::<Result<_, _>>()?;
    // The pool: kept rows with a non-zero overall desirability (D = 0 means some criterion is
    // entirely unacceptable), best first.
    let pool_rows: Vec<usize> = ranking
        .order
        .iter()
        .copied()
        .filter(|&i| ranking.rows[i].desirability.is_some_and(|d| d > 0.0))
        .collect();
    let fp_of: HashMap<usize, &crate::chem::Fingerprint> =
        ranking.order.iter().copied().zip(fps.iter()).collect();
    let pool: Vec<PickInput> = pool_rows
        .iter()
        .map(|&i| PickInput {
            fingerprint: fp_of[&i],
            fragment_ids: &rows[i].fragment_ids,
        })
        .collect();
    let picked = pick_diverse(&pool, &settings.diversity).map_err(other)?;
    let picks: Vec<usize> = picked
        .picks
        .iter()
        .map(|p| pool_rows[p.pool_index])
        .collect();
    let plans: Vec<Option<SynthPlan>> = picks
        .iter()
        .map(|&i| {
            let key = info[i].tuple_key.as_ref()?;
            let t = crate::combine::Tuple::parse_key(lib, key).ok()?;
            let cand = crate::combine::assemble(lib, &t);
            Some(crate::synth::plan(&cand, lib, &settings.effort))
        })
        .collect();
    let pick_records = picks
        .iter()
        .map(|&i| estimate_record(store, &info[i].candidate_id, &info[i].estimate_param_hash))
        .collect::<Result<Vec<_>, _>>()?;
    let settings_json = serde_json::to_string(settings).expect("serialisable");
    let param_hash = blake3::hash(settings_json.as_bytes()).to_hex()[..16].to_string();
    let spath = store.path.clone();
    let tx = store
        .connection_mut()
        .transaction()
        .map_err(CampaignError::sqlite(&spath))?;
    tx.execute(
        "DELETE FROM results WHERE stage = 'shortlist' AND param_hash = ?1",
        [&param_hash],
    )
    .map_err(CampaignError::sqlite(&spath))?;
    {
        let mut ins = tx
            .prepare(
                "INSERT INTO results(candidate_id, stage, param_hash, data)
                 VALUES (?1, 'shortlist', ?2, ?3)",
            )
            .map_err(CampaignError::sqlite(&spath))?;
        for (i, r) in ranking.rows.iter().enumerate() {
            let pick = picks.iter().position(|&p| p == i);
            let data = serde_json::json!({
                "settings": settings,
                "estimate_param_hash": info[i].estimate_param_hash,
                "calibration": info[i].calibration,
                "ranking": r,
                "shortlist_position": pick,
                "synthesis": pick.and_then(|k| plans[k].as_ref()),
            });
            ins.execute(params![rows[i].candidate_id, param_hash, data.to_string()])
                .map_err(CampaignError::sqlite(&spath))?;
        }
    }
    tx.commit().map_err(CampaignError::sqlite(&spath))?;
    Ok(ShortlistOutcome {
        param_hash,
        rows,
        info,
        ranking,
        picks,
        stop: picked.stop,
        plans,
        pick_records,
    })
}

/// One stored estimate record (JSON).
fn estimate_record(
    store: &Store,
    id: &str,
    param_hash: &str,
) -> Result<serde_json::Value, CampaignError> {
    let data: String = store
        .connection()
        .query_row(
            "SELECT data FROM results WHERE candidate_id = ?1 AND stage = 'estimate'
             AND param_hash = ?2",
            params![id, param_hash],
            |r| r.get(0),
        )
        .map_err(CampaignError::sqlite(&store.path))?;
    serde_json::from_str(&data).map_err(|e| CampaignError::Other(format!("{id}: {e}")))
}
