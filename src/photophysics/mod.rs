//! Rates and kinetics of a TADF emitter: radiative rate from the oscillator strength, Marcus
//! rates for intersystem crossing and its reverse, thermalised singlet and triplet manifolds,
//! the two-state prompt/delayed kinetic scheme solved exactly, and an upper bound on external
//! quantum efficiency. Pure functions; every default is a named, overridable parameter.
//!
//! Sources (shared/science.md c): Einstein A from f (Hilborn, Am. J. Phys. 50, 982 (1982)) with
//! the n² medium factor of the Strickler–Berg form (Strickler & Berg, J. Chem. Phys. 37, 814
//! (1962)); semiclassical Marcus rate k = (2π/ħ)|H_SO|²(4πλk_BT)^(−1/2)exp(−(ΔE + λ)²/(4λk_BT))
//! (as in Aizawa et al., Nat. Commun. 11, 3909 (2020), eqs. 1–2); the kinetic scheme of c.4
//! (Dias et al., Methods Appl. Fluoresc. 5, 012001 (2017); Tsuchiya et al., J. Phys. Chem. A
//! 125, 8074 (2021)); EQE = γ·η_exciton·Φ_PL·η_out (Kaji et al., Nat. Commun. 6, 8476 (2015)).

pub mod assess;

pub use assess::{Assessment, BandParams, assess, levels};

/// Elementary charge (C), electron mass (kg), vacuum permittivity (F/m), speed of light (m/s),
/// ħ (eV·s), Boltzmann constant (eV/K): CODATA 2018.
const E_CHARGE: f64 = 1.602_176_634e-19;
const M_E: f64 = 9.109_383_701_5e-31;
const EPS0: f64 = 8.854_187_812_8e-12;
const C_LIGHT: f64 = 299_792_458.0;
pub const HBAR_EV_S: f64 = 6.582_119_569e-16;
pub const K_B_EV: f64 = 8.617_333_262e-5;
/// h·c in eV·cm (1 cm⁻¹ = 1.239 841 98·10⁻⁴ eV): [`crate::colour::HC_EV_NM`] with 1 nm = 10⁻⁷ cm
/// (one constant, two units).
pub const HC_EV_CM: f64 = crate::colour::HC_EV_NM * 1e-7;

/// Oscillator-strength floor of [`log10_tadf_rate`]: added to `f` so that a dark state (f = 0)
/// still gets a finite score, about two orders of magnitude below a weakly bright CT emitter
/// (f ≈ 0.01). A project choice for ranking, not a physical oscillator strength; shared with
/// the fast tier's merit so both tiers score dark states alike.
pub const F_DARK_FLOOR: f64 = 1e-4;

/// Einstein A coefficient (s⁻¹) of an emission with oscillator strength `f` at `energy_ev`, in
/// a medium of refractive index `n` (equal degeneracies):
/// A = (2π e² ν̃² / (ε₀ m_e c)) · f · n², ν̃ = E/(hc).
pub fn radiative_rate(f: f64, energy_ev: f64, n: f64) -> f64 {
    let nu_m = energy_ev / HC_EV_CM * 100.0; // wavenumber in m⁻¹
    2.0 * std::f64::consts::PI * E_CHARGE * E_CHARGE * nu_m * nu_m / (EPS0 * M_E * C_LIGHT)
        * f
        * n
        * n
}

/// log10 of the delayed-fluorescence rate in the pre-equilibrium limit (s⁻¹):
/// k_TADF = k_r · ⅓ · exp(−max(ΔE_ST, 0)/k_BT), with k_r = [`radiative_rate`]. With S1 and T1
/// in fast equilibrium the singlet share of the pair is ≈ ⅓·exp(−ΔE_ST/k_BT) (three triplet
/// sublevels, the detailed balance of science.md c.2), and that share emits at k_r. A single
/// figure that rewards a small gap only together with a bright S1 (a dark, perpendicular
/// molecule with ΔE_ST = 0 scores low), used to order tuples in the screening cascade.
/// [`F_DARK_FLOOR`] is added to `f` (a dark state still gets a finite score, far below any
/// bright one).
pub fn log10_tadf_rate(s1_ev: f64, delta_est_ev: f64, f: f64, n: f64, t_k: f64) -> f64 {
    radiative_rate(f.max(0.0) + F_DARK_FLOOR, s1_ev, n).log10()
        - 3f64.log10()
        - delta_est_ev.max(0.0) / (K_B_EV * t_k * std::f64::consts::LN_10)
}

/// Marcus rate (s⁻¹) for a spin-forbidden transition with coupling `h_so_cm` (cm⁻¹),
/// reorganisation energy `lambda_ev`, energy *rise* `delta_ev` from initial to final state
/// (positive = uphill, e.g. T1→S1 with ΔEST > 0) and temperature `t_k`.
pub fn marcus_rate(h_so_cm: f64, lambda_ev: f64, delta_ev: f64, t_k: f64) -> f64 {
    let h = h_so_cm * HC_EV_CM;
    let kt = K_B_EV * t_k;
    let ea = (delta_ev + lambda_ev).powi(2) / (4.0 * lambda_ev);
    2.0 * std::f64::consts::PI / HBAR_EV_S * h * h
        / (4.0 * std::f64::consts::PI * lambda_ev * kt).sqrt()
        * (-ea / kt).exp()
}

/// Character of a state for choosing a spin–orbit coupling.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Character {
    Ct,
    Le,
    Mixed,
}

impl Character {
    pub fn from_label(s: &str) -> Character {
        match s {
            "CT" => Character::Ct,
            "LE" => Character::Le,
            _ => Character::Mixed,
        }
    }
}

/// Settings of the rate model, each with its default and source.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct RateParams {
    /// Refractive index of the host (organic host films ≈ 1.7–1.8, science.md e; from memory).
    pub refractive_index: f64,
    /// Temperature (K) of the Boltzmann factors and Marcus rates. 300 K: room temperature,
    /// common practice for device-relevant rates (science.md c.2 check values are at 300 K).
    pub temperature_k: f64,
    /// Reorganisation energy for S↔T conversion (typically 0.1–0.3 eV; Samanta et al., J. Am.
    /// Chem. Soc. 139, 4042 (2017), from memory).
    pub reorganisation_ev: f64,
    /// ⟨¹CT|H_SO|³CT⟩ (cm⁻¹): same orbital configuration, El-Sayed forbidden, < 0.1 cm⁻¹
    /// (Samanta 2017; Penfold et al., Chem. Rev. 118, 6975 (2018); from memory).
    pub soc_ct_ct_cm: f64,
    /// ⟨¹CT|H_SO|³LE⟩ and ⟨¹LE|H_SO|³CT⟩ (cm⁻¹): 0.1 to a few cm⁻¹ (same sources).
    pub soc_ct_le_cm: f64,
    /// ⟨¹LE|H_SO|³LE⟩ between π→π* states (cm⁻¹): small, taken as the CT↔LE value's fifth
    /// (an assumption of this tool, stated here; override when known).
    pub soc_le_le_cm: f64,
    /// States within this many k_BT of the lowest of their multiplicity join its thermalised
    /// manifold. 3 k_BT (Boltzmann factor e⁻³ ≈ 5 %): ASSUMED, a project choice; states
    /// higher up carry too little population to matter at the model's accuracy.
    pub manifold_kt: f64,
    /// Non-radiative rates (s⁻¹): user parameters; 0 by default, so efficiencies are upper
    /// bounds labelled as such.
    pub k_nr_singlet: f64,
    pub k_nr_triplet: f64,
    /// Charge balance γ (1 = ideal) and outcoupling η_out (0.2: the low end of the usual
    /// 20–30 % for isotropic emitters, Kaji et al. 2015; common practice).
    pub charge_balance: f64,
    pub outcoupling: f64,
}

impl Default for RateParams {
    fn default() -> Self {
        RateParams {
            refractive_index: 1.7,
            temperature_k: 300.0,
            reorganisation_ev: 0.2,
            soc_ct_ct_cm: 0.05,
            soc_ct_le_cm: 0.5,
            soc_le_le_cm: 0.1,
            manifold_kt: 3.0,
            k_nr_singlet: 0.0,
            k_nr_triplet: 0.0,
            charge_balance: 1.0,
            outcoupling: 0.2,
        }
    }
}

impl RateParams {
    /// Check every setting's range; the message names the offending key (as in the workflow's
    /// `[estimate.rates]` table) and the value found. NaN fails every check.
    pub fn validate(&self) -> Result<(), String> {
        let at_least_one = |x: f64| (x >= 1.0 && x.is_finite(), "at least 1");
        let positive = |x: f64| (x > 0.0 && x.is_finite(), "positive");
        let non_negative = |x: f64| (x >= 0.0 && x.is_finite(), "non-negative");
        let fraction = |x: f64| (x > 0.0 && x <= 1.0, "in (0, 1]");
        let checks: [(&str, f64, Check); 11] = [
            ("refractive_index", self.refractive_index, at_least_one),
            ("temperature_k", self.temperature_k, positive),
            ("reorganisation_ev", self.reorganisation_ev, positive),
            ("soc_ct_ct_cm", self.soc_ct_ct_cm, non_negative),
            ("soc_ct_le_cm", self.soc_ct_le_cm, non_negative),
            ("soc_le_le_cm", self.soc_le_le_cm, non_negative),
            ("manifold_kt", self.manifold_kt, non_negative),
            ("k_nr_singlet", self.k_nr_singlet, non_negative),
            ("k_nr_triplet", self.k_nr_triplet, non_negative),
            ("charge_balance", self.charge_balance, fraction),
            ("outcoupling", self.outcoupling, fraction),
        ];
        first_failure(&checks)
    }

    /// Spin–orbit coupling (cm⁻¹) between a singlet and a triplet of the given characters
    /// (a mixed state counts as half CT, half LE: the couplings are interpolated).
    pub fn soc(&self, s: Character, t: Character) -> f64 {
        let w = |c: Character| match c {
            Character::Ct => 1.0,
            Character::Le => 0.0,
            // ASSUMED (project choice): a state labelled mixed (CT number between the LE and
            // CT thresholds) is weighted half CT, half LE; no source fixes this share.
            Character::Mixed => 0.5,
        };
        let (a, b) = (w(s), w(t));
        a * b * self.soc_ct_ct_cm
            + (a * (1.0 - b) + (1.0 - a) * b) * self.soc_ct_le_cm
            + (1.0 - a) * (1.0 - b) * self.soc_le_le_cm
    }
}

/// A range check on one setting: (passes, what is required).
pub(crate) type Check = fn(f64) -> (bool, &'static str);

/// The first `(key, value, check)` whose check fails, as "key must be …, found value".
pub(crate) fn first_failure(checks: &[(&str, f64, Check)]) -> Result<(), String> {
    for (key, value, check) in checks {
        let (ok, want) = check(*value);
        if !ok {
            return Err(format!("{key} must be {want}, found {value}"));
        }
    }
    Ok(())
}

/// One excited state as the rate model needs it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Level {
    pub energy_ev: f64,
    /// Oscillator strength (singlets; 0 for triplets).
    pub f: f64,
    pub character: Character,
}

/// Effective rates (s⁻¹) of the thermalised S and T manifolds.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Rates {
    pub k_r: f64,
    pub k_isc: f64,
    pub k_risc: f64,
}

/// Normalised Boltzmann weights of a thermalised manifold: `levels` sorted by energy, lowest
/// first; a level more than `manifold_kt`·k_BT above the lowest gets weight 0. The lowest
/// level's weight is its share of the population (1 when it is alone in the window).
pub fn manifold_weights(levels: &[Level], p: &RateParams) -> Vec<f64> {
    let kt = K_B_EV * p.temperature_k;
    let e0 = levels.first().map_or(0.0, |l| l.energy_ev);
    let mut w: Vec<f64> = levels
        .iter()
        .map(|l| {
            let d = l.energy_ev - e0;
            if d <= p.manifold_kt * kt {
                (-d / kt).exp()
            } else {
                0.0
            }
        })
        .collect();
    let z: f64 = w.iter().sum();
    w.iter_mut().for_each(|x| *x /= z);
    w
}

/// Rates of the thermalised manifolds: k_r = Σ_i w_i k_r,i over singlets within `manifold_kt`
/// of S1; k_ISC = Σ_i w_i Σ_j 3·k(S_i→T_j) (three triplet sublevels, each coupled by the
/// character-chosen H_SO); k_RISC = Σ_j w_j Σ_i k(T_j→S_i) over the triplets within the same
/// window of T1 (a thermalised triplet population, so per sublevel), which includes reverse
/// crossing through a higher local triplet. Detailed balance then gives
/// k_RISC/k_ISC = ⅓·exp(−ΔE/k_BT) for one singlet and one triplet.
/// `singlets` and `triplets` are sorted by energy, lowest first. The lowest pair's share of
/// each rate is its own rate times the lowest level's [`manifold_weights`] entry: w_S1·k_r(S1),
/// w_S1·3k(S1→T1), w_T1·k(T1→S1).
pub fn manifold_rates(singlets: &[Level], triplets: &[Level], p: &RateParams) -> Rates {
    let ws = manifold_weights(singlets, p);
    let wt = manifold_weights(triplets, p);
    let t = p.temperature_k;
    let lam = p.reorganisation_ev;
    let mut k_r = 0.0;
    let mut k_isc = 0.0;
    let mut k_risc = 0.0;
    for (s, &w) in singlets.iter().zip(&ws) {
        if w == 0.0 {
            continue;
        }
        k_r += w * radiative_rate(s.f, s.energy_ev, p.refractive_index);
        for tr in triplets {
            let h = p.soc(s.character, tr.character);
            k_isc += w * 3.0 * marcus_rate(h, lam, tr.energy_ev - s.energy_ev, t);
        }
    }
    for (tr, &w) in triplets.iter().zip(&wt) {
        if w == 0.0 {
            continue;
        }
        for s in singlets {
            let h = p.soc(s.character, tr.character);
            k_risc += w * marcus_rate(h, lam, s.energy_ev - tr.energy_ev, t);
        }
    }
    Rates { k_r, k_isc, k_risc }
}

/// The exact solution of the two-state scheme dS/dt = −k_S S + k_RISC T,
/// dT/dt = k_ISC S − k_T T with S(0) = 1, T(0) = 0 (science.md c.4).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Kinetics {
    pub tau_prompt_s: f64,
    pub tau_delayed_s: f64,
    pub phi_prompt: f64,
    pub phi_delayed: f64,
    pub phi_pl: f64,
    /// Photons per exciton under electrical excitation (25 % singlets, 75 % triplets).
    pub el_photons_per_exciton: f64,
    /// Share of the triplets formed that come back as singlets (Φ_RISC).
    pub triplet_harvesting: f64,
    /// EQE upper bound = charge balance × photons per exciton × outcoupling.
    pub eqe_bound: f64,
    /// True when both non-radiative rates are zero (the EQE figure is then the k_nr = 0 bound).
    pub knr_zero_bound: bool,
}

/// Solve the kinetic scheme for `rates` and the non-radiative rates and efficiencies of `p`.
pub fn kinetics(rates: &Rates, p: &RateParams) -> Kinetics {
    let k_s = rates.k_r + p.k_nr_singlet + rates.k_isc;
    let k_t = rates.k_risc + p.k_nr_triplet;
    let disc = ((k_s - k_t).powi(2) + 4.0 * rates.k_isc * rates.k_risc).sqrt();
    let lp = 0.5 * (k_s + k_t + disc);
    // λ− from the product of the roots (det = k_S k_T − k_ISC k_RISC): no cancellation when
    // λ− ≪ λ+.
    let det = k_s * k_t - rates.k_isc * rates.k_risc;
    let lm = if lp > 0.0 { (det / lp).max(0.0) } else { 0.0 };
    let (a, b) = if lp > lm {
        ((k_s - lm) / (lp - lm), (lp - k_s) / (lp - lm))
    } else {
        (1.0, 0.0)
    };
    let phi_pf = rates.k_r * a / lp;
    let phi_df = if lm > 0.0 { rates.k_r * b / lm } else { 0.0 };
    let phi_isc = rates.k_isc / k_s;
    let phi_risc = if k_t > 0.0 { rates.k_risc / k_t } else { 0.0 };
    let el = (rates.k_r / k_s) * (0.25 + 0.75 * phi_risc) / (1.0 - phi_isc * phi_risc);
    Kinetics {
        tau_prompt_s: 1.0 / lp,
        tau_delayed_s: if lm > 0.0 { 1.0 / lm } else { f64::INFINITY },
        phi_prompt: phi_pf,
        phi_delayed: phi_df,
        phi_pl: phi_pf + phi_df,
        el_photons_per_exciton: el,
        triplet_harvesting: phi_risc,
        eqe_bound: p.charge_balance * el * p.outcoupling,
        knr_zero_bound: p.k_nr_singlet == 0.0 && p.k_nr_triplet == 0.0,
    }
}

/// A rate averaged over a torsion distribution (per-angle rates, then the average; never the
/// rate of the averaged gap), with the weighted mean and standard deviation of log10 k.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct AveragedRate {
    pub mean: f64,
    pub log10_mean: f64,
    pub log10_sd: f64,
}

/// Average `(weight, rate)` pairs (weights need not be normalised).
pub fn average_rate(samples: &[(f64, f64)]) -> AveragedRate {
    let wsum: f64 = samples.iter().map(|s| s.0).sum();
    if wsum <= 0.0 {
        return AveragedRate {
            mean: f64::NAN,
            log10_mean: f64::NAN,
            log10_sd: f64::NAN,
        };
    }
    let mean = samples.iter().map(|s| s.0 * s.1).sum::<f64>() / wsum;
    let logs: Vec<(f64, f64)> = samples
        .iter()
        .filter(|s| s.1 > 0.0)
        .map(|s| (s.0, s.1.log10()))
        .collect();
    let lw: f64 = logs.iter().map(|s| s.0).sum();
    let lm = logs.iter().map(|s| s.0 * s.1).sum::<f64>() / lw;
    let var = logs.iter().map(|s| s.0 * (s.1 - lm).powi(2)).sum::<f64>() / lw;
    AveragedRate {
        mean,
        log10_mean: lm,
        log10_sd: var.sqrt(),
    }
}
