//! Sensitiser–emitter pairs: every estimated candidate of a store (as a TADF sensitiser, its
//! emission the stored band) against terminal emitters given by their absorption spectra,
//! ranked by Förster radius.

use rusqlite::Connection;
use serde::Serialize;

use crate::colour::{Spectrum, gaussian_band};
use crate::forster::{forster_radius_nm, overlap_integral};

/// One sensitiser–emitter pair.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Pair {
    pub candidate_id: String,
    pub canonical_smiles: String,
    /// The estimate's parameter hash: one candidate estimated under two parameter sets gives
    /// two sensitisers.
    pub param_hash: String,
    pub emitter: String,
    /// Sensitiser emission band peak (eV) and its PL yield bound used as Φ_D.
    pub sensitiser_peak_ev: f64,
    pub phi_d: f64,
    pub overlap_m1_cm1_nm4: f64,
    pub r0_nm: f64,
    /// Quantities of the sensitiser's estimate that missed the validation bar.
    pub unvalidated: Vec<String>,
}

/// Rank all (estimate record, emitter) pairs by R₀ with orientation factor `kappa2` (e.g.
/// [`crate::forster::KAPPA2_ISOTROPIC`]), largest first (ties by id, parameter hash, then
/// emitter). Uses the newest estimate record layout (with photophysics); records without one
/// are skipped and counted. Returns the pairs and the number skipped.
pub fn rank_pairs(
    conn: &Connection,
    emitters: &[(String, Spectrum)],
    kappa2: f64,
) -> Result<(Vec<Pair>, u64), String> {
    let (mut out, mut skipped) = (Vec::new(), 0u64);
    super::for_each_estimate(conn, |id, smi, hash, v| {
        let ph = &v["photophysics"];
        let (Some(peak), Some(fwhm), Some(phi), Some(n)) = (
            ph["emission_peak_ev"].as_f64(),
            ph["band"]["fwhm_ev"].as_f64(),
            ph["kinetics"]["phi_pl"].as_f64(),
            ph["rate_params"]["refractive_index"].as_f64(),
        ) else {
            skipped += 1;
            return Ok(());
        };
        let Ok(band) = gaussian_band(peak, fwhm) else {
            skipped += 1;
            return Ok(());
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
                candidate_id: id.to_string(),
                canonical_smiles: smi.to_string(),
                param_hash: hash.to_string(),
                emitter: name.clone(),
                sensitiser_peak_ev: peak,
                phi_d: phi,
                overlap_m1_cm1_nm4: j,
                r0_nm: forster_radius_nm(j, phi, n, kappa2),
                unvalidated: unvalidated.clone(),
            });
        }
        Ok(())
    })?;
    out.sort_by(|a, b| {
        b.r0_nm
            .total_cmp(&a.r0_nm)
            .then_with(|| a.candidate_id.cmp(&b.candidate_id))
            .then_with(|| a.param_hash.cmp(&b.param_hash))
            .then_with(|| a.emitter.cmp(&b.emitter))
    });
    Ok((out, skipped))
}
