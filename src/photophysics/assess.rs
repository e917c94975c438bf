//! From a π-tier estimate to rates, kinetics and colour: the photophysics page of one
//! candidate.

use serde::Serialize;

use super::{
    AveragedRate, Character, Kinetics, Level, RateParams, Rates, average_rate, kinetics,
    manifold_rates, marcus_rate, radiative_rate,
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

/// Rates, kinetics and colour of one candidate.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Assessment {
    /// Thermalised-manifold rates at the equilibrium twists (all computed states).
    pub rates_equilibrium: Rates,
    /// Torsion-averaged S1/T1 rates (S1, T1 and f per angle; characters from equilibrium).
    pub k_r_averaged: AveragedRate,
    pub k_isc_averaged: AveragedRate,
    pub k_risc_averaged: AveragedRate,
    /// The rates the kinetics use: the torsion average of the S1/T1 pair plus what the
    /// thermalised manifold adds at equilibrium beyond that pair (bright higher singlets,
    /// crossings through higher triplets).
    pub rates_effective: Rates,
    /// Kinetics with the effective rates.
    pub kinetics: Kinetics,
    pub emission_peak_ev: f64,
    pub colour: Option<Colour>,
    pub rate_params: RateParams,
    pub band: BandParams,
}

fn levels(states: &[StateInfo]) -> Vec<Level> {
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
    let h = p.soc(cs, ct);
    // Per-angle rates of the S1/T1 pair; links weighted equally, as the energy averages.
    let n_links = est.links.len().max(1) as f64;
    let pair = |s1: f64, t1: f64, f: f64| -> (f64, f64, f64) {
        (
            radiative_rate(f, s1, p.refractive_index),
            3.0 * marcus_rate(h, p.reorganisation_ev, t1 - s1, p.temperature_k),
            marcus_rate(h, p.reorganisation_ev, s1 - t1, p.temperature_k),
        )
    };
    let samples: Vec<(f64, (f64, f64, f64))> = if est.angle_samples.is_empty() {
        vec![(1.0, pair(est.s1_ev, est.t1_ev, est.f_s1))]
    } else {
        est.angle_samples
            .iter()
            .map(|a| (a.weight / n_links, pair(a.s1_ev, a.t1_ev, a.f_s1)))
            .collect()
    };
    let pick = |k: usize| -> Vec<(f64, f64)> {
        samples
            .iter()
            .map(|(w, r)| (*w, [r.0, r.1, r.2][k]))
            .collect()
    };
    let (kr, kisc, krisc) = (
        average_rate(&pick(0)),
        average_rate(&pick(1)),
        average_rate(&pick(2)),
    );
    let eq_pair = pair(est.s1_ev, est.t1_ev, est.f_s1);
    let effective = Rates {
        k_r: kr.mean + (rates.k_r - eq_pair.0).max(0.0),
        k_isc: kisc.mean + (rates.k_isc - eq_pair.1).max(0.0),
        k_risc: krisc.mean + (rates.k_risc - eq_pair.2).max(0.0),
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
