//! From a π-tier estimate to rates, kinetics and colour: the photophysics page of one
//! candidate.

use serde::Serialize;

use super::{
    AveragedRate, Character, Check, Kinetics, Level, RateParams, Rates, average_rate,
    first_failure, kinetics, manifold_rates, manifold_weights,
};
use crate::colour::{Colour, D65, analyse, gaussian_band};
use crate::pi::estimate::{Estimate, StateInfo};

/// Emission band settings.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct BandParams {
    /// Emission peak = vertical S1 − this (eV). 0.25 eV is an assumption of this tool for
    /// twisted donor–acceptor emitters in a rigid host; override with measured values.
    pub stokes_shift_ev: f64,
    /// Band FWHM in energy (eV); charge-transfer emitters ≈ 0.35–0.5 eV (science.md d, from
    /// memory).
    pub fwhm_ev: f64,
}

impl Default for BandParams {
    fn default() -> Self {
        BandParams {
            stokes_shift_ev: 0.25,
            fwhm_ev: 0.40,
        }
    }
}

impl BandParams {
    /// Check the ranges (Stokes shift ≥ 0, FWHM > 0); the message names the offending key (as
    /// in the workflow's `[estimate.band]` table) and the value found.
    pub fn validate(&self) -> Result<(), String> {
        let checks: [(&str, f64, Check); 2] = [
            ("stokes_shift_ev", self.stokes_shift_ev, |x| {
                (x >= 0.0 && x.is_finite(), "non-negative")
            }),
            ("fwhm_ev", self.fwhm_ev, |x| {
                (x > 0.0 && x.is_finite(), "positive")
            }),
        ];
        first_failure(&checks)
    }
}

/// Rates, kinetics and colour of one candidate.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Assessment {
    /// Thermalised-manifold rates at the equilibrium twists (all computed states).
    pub rates_equilibrium: Rates,
    /// Torsion-averaged S1/T1 rates (S1, T1 and f per angle; characters from equilibrium).
    pub k_r_averaged: AveragedRate,
    pub k_isc_averaged: AveragedRate,
    pub k_risc_averaged: AveragedRate,
    /// The rates the kinetics use: the manifold rates at equilibrium with the lowest pair's
    /// share replaced by its torsion average, i.e. w_S1·⟨k_r(S1)⟩ + (k_r,manifold − w_S1·k_r(S1)),
    /// likewise w_S1 for k_ISC and w_T1 for k_RISC (w: the lowest level's Boltzmann share of
    /// its manifold at equilibrium). So a dark S2 within the window dilutes the emitting
    /// population (w_S1 < 1 lowers k_r) and a bright S2 adds its own share; the higher states'
    /// terms stay at the equilibrium geometry. (A share rather than a ratio
    /// manifold/pair: it stays defined when S1 is dark at equilibrium.)
    pub rates_effective: Rates,
    /// Kinetics with the effective rates.
    pub kinetics: Kinetics,
    pub emission_peak_ev: f64,
    pub colour: Option<Colour>,
    pub rate_params: RateParams,
    pub band: BandParams,
}

/// The rate model's view of π-tier states (energy, f, character from the state's label).
pub fn levels(states: &[StateInfo]) -> Vec<Level> {
    states
        .iter()
        .map(|s| Level {
            energy_ev: s.energy_ev,
            f: s.osc_strength,
            character: Character::from_label(s.label),
        })
        .collect()
}

/// Assess `est` with the rate and band settings.
pub fn assess(est: &Estimate, p: &RateParams, band: &BandParams) -> Assessment {
    let s = levels(&est.singlets);
    let t = levels(&est.triplets);
    let rates = manifold_rates(&s, &t, p);
    let (cs, ct) = (
        s.first().map_or(Character::Mixed, |l| l.character),
        t.first().map_or(Character::Mixed, |l| l.character),
    );
    // The S1/T1 pair alone at one geometry (characters from equilibrium).
    let pair = |s1: f64, t1: f64, f: f64| {
        manifold_rates(
            &[Level {
                energy_ev: s1,
                f,
                character: cs,
            }],
            &[Level {
                energy_ev: t1,
                f: 0.0,
                character: ct,
            }],
            p,
        )
    };
    // Per-angle pair rates; average_rate normalises the weights, so each link's samples
    // (weights summing to 1 within the link) count equally, as in the energy averages.
    let samples: Vec<(f64, Rates)> = if est.angle_samples.is_empty() {
        vec![(1.0, pair(est.s1_ev, est.t1_ev, est.f_s1))]
    } else {
        est.angle_samples
            .iter()
            .map(|a| (a.weight, pair(a.s1_ev, a.t1_ev, a.f_s1)))
            .collect()
    };
    let average = |k: fn(&Rates) -> f64| {
        average_rate(&samples.iter().map(|(w, r)| (*w, k(r))).collect::<Vec<_>>())
    };
    let (kr, kisc, krisc) = (
        average(|r| r.k_r),
        average(|r| r.k_isc),
        average(|r| r.k_risc),
    );
    // The lowest pair's term inside `rates` (same levels, same arithmetic) and its weight.
    let eq_pair = manifold_rates(&s[..s.len().min(1)], &t[..t.len().min(1)], p);
    let lowest_weight = |l: &[Level]| manifold_weights(l, p).first().copied().unwrap_or(1.0);
    let (ws1, wt1) = (lowest_weight(&s), lowest_weight(&t));
    // Replace the pair's equilibrium share by its torsion average; max(0) only absorbs
    // rounding (the rest of a manifold sum is non-negative).
    let swap = |total: f64, w: f64, eq: f64, avg: f64| w * avg + (total - w * eq).max(0.0);
    let effective = Rates {
        k_r: swap(rates.k_r, ws1, eq_pair.k_r, kr.mean),
        k_isc: swap(rates.k_isc, ws1, eq_pair.k_isc, kisc.mean),
        k_risc: swap(rates.k_risc, wt1, eq_pair.k_risc, krisc.mean),
    };
    let peak = est.s1_ev - band.stokes_shift_ev;
    let colour = gaussian_band(peak, band.fwhm_ev)
        .ok()
        .and_then(|sp| analyse(&sp, D65).ok());
    Assessment {
        rates_equilibrium: rates,
        k_r_averaged: kr,
        k_isc_averaged: kisc,
        k_risc_averaged: krisc,
        rates_effective: effective,
        kinetics: kinetics(&effective, p),
        emission_peak_ev: peak,
        colour,
        rate_params: p.clone(),
        band: *band,
    }
}
