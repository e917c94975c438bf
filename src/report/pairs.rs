//! Sensitiser–emitter pairs: every estimated candidate of a store (as a TADF sensitiser, its
//! emission the stored band) against terminal emitters, ranked by Förster radius. A terminal
//! emitter's absorption is a measured spectrum (CSV), or is built from π-tier singlets
//! ([`crate::forster::absorption_from_transitions`]): those of the store's own estimated
//! candidates ([`store_absorbers`]) or of a SMILES estimated here ([`smiles_absorber`]).

use rusqlite::Connection;
use serde::Serialize;

use crate::colour::{Spectrum, gaussian_band};
use crate::forster::{absorption_from_transitions, forster_radius_nm, overlap_integral};

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

/// Terminal emitters from the store: each estimated candidate (newest record per candidate
/// and parameter set; named by candidate id, so it is never paired with itself) whose
/// brightest stored singlet has f ≥ `min_f`, its absorption built from all its stored
/// singlets at the equilibrium twist with bands of FWHM `fwhm_ev`. Returns the absorbers and
/// the number of records without singlets (skipped).
pub fn store_absorbers(
    conn: &Connection,
    min_f: f64,
    fwhm_ev: f64,
) -> Result<(Vec<(String, Spectrum)>, u64), String> {
    let (mut out, mut skipped) = (Vec::<(String, Spectrum)>::new(), 0u64);
    super::for_each_estimate(conn, |id, _smi, _hash, v| {
        let Some(singlets) = v["singlets"].as_array() else {
            skipped += 1;
            return Ok(());
        };
        let tr: Vec<(f64, f64)> = singlets
            .iter()
            .filter_map(|s| Some((s["energy_ev"].as_f64()?, s["osc_strength"].as_f64()?)))
            .collect();
        let brightest = tr.iter().map(|t| t.1).fold(0.0, f64::max);
        if brightest < min_f || out.iter().any(|(n, _)| n == id) {
            return Ok(());
        }
        match absorption_from_transitions(&tr, fwhm_ev) {
            Ok(eps) => out.push((id.to_string(), eps)),
            Err(_) => skipped += 1,
        }
        Ok(())
    })?;
    Ok((out, skipped))
}

/// A terminal emitter given as SMILES: estimated by the π tier at its equilibrium twist
/// (default estimate settings), its absorption built from the computed singlets.
pub fn smiles_absorber(
    smiles: &str,
    ppp: &crate::pi::params::PppParams,
    fwhm_ev: f64,
) -> Result<Spectrum, String> {
    let mol = crate::chem::parse_smiles(smiles).map_err(|e| format!("SMILES '{smiles}': {e}"))?;
    let est = crate::pi::estimate::estimate(&mol, ppp, &Default::default())
        .map_err(|e| format!("{smiles}: {e}"))?;
    let tr: Vec<(f64, f64)> = est
        .singlets
        .iter()
        .map(|s| (s.energy_ev, s.osc_strength))
        .collect();
    absorption_from_transitions(&tr, fwhm_ev).map_err(|e| format!("{smiles}: {e}"))
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
            if name == id {
                continue; // a candidate is not its own terminal emitter
            }
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
