//! Sensitiser–emitter pairs: every estimated candidate of a store (as a TADF sensitiser, its
//! emission the stored band) against terminal emitters given by their absorption spectra,
//! ranked by Förster radius.

use rusqlite::Connection;
use serde::Serialize;

use crate::colour::{Spectrum, gaussian_band};
use crate::forster::{KAPPA2_ISOTROPIC, forster_radius_nm, overlap_integral};

/// One sensitiser–emitter pair.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Pair {
    pub candidate_id: String,
    pub canonical_smiles: String,
    pub emitter: String,
    /// Sensitiser emission band peak (eV) and its PL yield bound used as Φ_D.
    pub sensitiser_peak_ev: f64,
    pub phi_d: f64,
    pub overlap_m1_cm1_nm4: f64,
    pub r0_nm: f64,
    /// Quantities of the sensitiser's estimate that missed the validation bar.
    pub unvalidated: Vec<String>,
}

/// Rank all (candidate, emitter) pairs by R₀, largest first (ties by id, then emitter). Uses
/// the newest estimate record layout (with photophysics); candidates without one are skipped
/// and counted. Returns the pairs and the number skipped.
pub fn rank_pairs(
    conn: &Connection,
    emitters: &[(String, Spectrum)],
    kappa2: Option<f64>,
) -> Result<(Vec<Pair>, u64), String> {
    let mut st = conn
        .prepare(
            "SELECT r.candidate_id, c.canonical_smiles, r.data
             FROM results r JOIN candidates c ON c.id = r.candidate_id
             WHERE r.stage = 'estimate' ORDER BY r.candidate_id, r.param_hash",
        )
        .map_err(|e| e.to_string())?;
    let mut rows = st.query([]).map_err(|e| e.to_string())?;
    let (mut out, mut skipped) = (Vec::new(), 0u64);
    while let Some(r) = rows.next().map_err(|e| e.to_string())? {
        let (id, smi, data): (String, String, String) = (
            r.get(0).map_err(|e| e.to_string())?,
            r.get(1).map_err(|e| e.to_string())?,
            r.get(2).map_err(|e| e.to_string())?,
        );
        let v: serde_json::Value =
            serde_json::from_str(&data).map_err(|e| format!("{id}: stored record: {e}"))?;
        let ph = &v["photophysics"];
        let (Some(peak), Some(fwhm), Some(phi), Some(n)) = (
            ph["emission_peak_ev"].as_f64(),
            ph["band"]["fwhm_ev"].as_f64(),
            ph["kinetics"]["phi_pl"].as_f64(),
            ph["rate_params"]["refractive_index"].as_f64(),
        ) else {
            skipped += 1;
            continue;
        };
        let Ok(band) = gaussian_band(peak, fwhm) else {
            skipped += 1;
            continue;
        };
        let unvalidated: Vec<String> = v["unvalidated"]
            .as_array()
            .map(|a| {
                a.iter()
                    .filter_map(|s| s.as_str().map(String::from))
                    .collect()
            })
            .unwrap_or_default();
        for (name, eps) in emitters {
            let j = overlap_integral(&band, eps)?;
            out.push(Pair {
                candidate_id: id.clone(),
                canonical_smiles: smi.clone(),
                emitter: name.clone(),
                sensitiser_peak_ev: peak,
                phi_d: phi,
                overlap_m1_cm1_nm4: j,
                r0_nm: forster_radius_nm(j, phi, n, kappa2.unwrap_or(KAPPA2_ISOTROPIC)),
                unvalidated: unvalidated.clone(),
            });
        }
    }
    out.sort_by(|a, b| {
        b.r0_nm
            .total_cmp(&a.r0_nm)
            .then_with(|| a.candidate_id.cmp(&b.candidate_id))
            .then_with(|| a.emitter.cmp(&b.emitter))
    });
    Ok((out, skipped))
}
