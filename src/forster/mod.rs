//! Förster resonance energy transfer from a sensitiser (donor emission) to a terminal emitter
//! (acceptor absorption): spectral overlap integral, Förster radius, transfer efficiency and
//! rate. Pure functions on spectra.
//!
//! R₀⁶ = 9 ln10 κ² Φ_D J / (128 π⁵ N_A n⁴), J = ∫ I_D(λ) ε_A(λ) λ⁴ dλ with ∫ I_D dλ = 1 and ε_A
//! the molar decadic absorption coefficient; k_T = (1/τ_D)(R₀/r)⁶; E = 1/(1 + (r/R₀)⁶)
//! (IUPAC Gold Book, "Förster resonance energy transfer", Braslavsky et al., Pure Appl. Chem.
//! 79, 293 (2007); its practical form R₀/nm = 0.02108 [κ² Φ_D n⁻⁴ J/(M⁻¹ cm⁻¹ nm⁴)]^(1/6)).

use crate::colour::{Spectrum, Units};
use crate::photophysics::HC_EV_CM;

/// Avogadro constant (mol⁻¹, CODATA 2018 exact).
const N_A: f64 = 6.022_140_76e23;
/// Electric constant (F m⁻¹), electron mass (kg), speed of light (m s⁻¹), elementary charge
/// (C): CODATA 2018.
const EPS0: f64 = 8.854_187_812_8e-12;
const M_E: f64 = 9.109_383_701_5e-31;
const C: f64 = 299_792_458.0;
const E_CHARGE: f64 = 1.602_176_634e-19;

/// Default width (FWHM, eV) of each absorption band built from computed states: a choice of
/// this tool for rigid fluorescent terminal emitters (narrower than the charge-transfer
/// emission default), not a fitted value. Overridable wherever it is used.
pub const ABSORPTION_FWHM_EV: f64 = 0.25;

/// κ² for isotropic, dynamically averaged dipoles (Gold Book).
pub const KAPPA2_ISOTROPIC: f64 = 2.0 / 3.0;

/// The prefactor of R₀ in nm for J in M⁻¹ cm⁻¹ nm⁴, from 9 ln10/(128 π⁵ N_A) with unit
/// conversions (1 M⁻¹ cm⁻¹ nm⁴ = 10³ cm³ mol⁻¹ · cm⁻¹ · 10⁻²⁸ cm⁴ → cm⁶ per molecule after ÷ N_A).
pub fn r0_prefactor_nm() -> f64 {
    // J unit: M⁻¹ cm⁻¹ nm⁴ = (L mol⁻¹ cm⁻¹) nm⁴ = 10³ cm³ mol⁻¹ cm⁻¹ × 10⁻²⁸ cm⁴.
    let unit_cm3_per_mol = 1e3 * 1e-28;
    let r6_cm6 = 9.0 * std::f64::consts::LN_10 / (128.0 * std::f64::consts::PI.powi(5) * N_A)
        * unit_cm3_per_mol;
    r6_cm6.powf(1.0 / 6.0) * 1e7 // cm → nm
}

/// Spectral overlap J (M⁻¹ cm⁻¹ nm⁴) of a donor emission spectrum (any scale; normalised here
/// to unit area in wavelength) and an acceptor's molar absorption coefficient ε(λ)
/// (M⁻¹ cm⁻¹), by the trapezoidal rule on the donor's wavelength grid.
pub fn overlap_integral(donor: &Spectrum, acceptor_eps: &Spectrum) -> Result<f64, String> {
    let w = &donor.wavelength_nm;
    let trap = |f: &dyn Fn(usize) -> f64| -> f64 {
        (1..w.len())
            .map(|i| 0.5 * (f(i - 1) + f(i)) * (w[i] - w[i - 1]))
            .sum()
    };
    let area = trap(&|i| donor.power[i]);
    if !(area > 0.0 && area.is_finite()) {
        return Err("the donor emission spectrum has no area".into());
    }
    let j = trap(&|i| donor.power[i] / area * acceptor_eps.at(w[i]) * w[i].powi(4));
    Ok(j)
}

/// The factor K in f = K ∫ε(ν̃) dν̃ (ε in M⁻¹ cm⁻¹, ν̃ in cm⁻¹), derived from
/// K = 4 ε₀ m_e c² ln10 / (N_A e²) in SI (ε in m² mol⁻¹, ν̃ in m⁻¹; 1 M⁻¹ cm⁻¹ = 0.1 m² mol⁻¹,
/// 1 cm⁻¹ = 100 m⁻¹). The handbook value is 4.32×10⁻⁹ (Strickler & Berg, J. Chem. Phys. 37, 814
/// (1962); science.md c.1).
pub fn osc_strength_per_integrated_eps() -> f64 {
    let si = 4.0 * EPS0 * M_E * C * C * std::f64::consts::LN_10 / (N_A * E_CHARGE * E_CHARGE);
    si * 0.1 * 100.0
}

/// The molar decadic absorption coefficient ε(λ) (M⁻¹ cm⁻¹) of a molecule from its computed
/// singlet transitions `(energy_ev, osc_strength)`: each a Gaussian in wavenumber of the given
/// FWHM (eV) whose area ∫ε dν̃ = f / K ([`osc_strength_per_integrated_eps`]). ε is a point
/// function, so its value at λ is ε(ν̃ = 1/λ) without a Jacobian. Grid: 200–1100 nm in 0.5 nm
/// steps. Transitions with f ≤ 0 or non-finite values are skipped; none left is an error.
pub fn absorption_from_transitions(
    transitions: &[(f64, f64)],
    fwhm_ev: f64,
) -> Result<Spectrum, String> {
    if !(fwhm_ev > 0.0 && fwhm_ev.is_finite()) {
        return Err(format!(
            "absorption band FWHM {fwhm_ev} eV: must be positive"
        ));
    }
    let bands: Vec<(f64, f64)> = transitions
        .iter()
        .copied()
        .filter(|&(e, f)| e > 0.0 && e.is_finite() && f > 0.0 && f.is_finite())
        .collect();
    if bands.is_empty() {
        return Err("no allowed transition (f > 0) to build an absorption spectrum from".into());
    }
    // Wavenumbers in cm⁻¹: ν̃ = E / (hc), hc in eV cm.
    let hc_ev_cm = HC_EV_CM;
    let sigma = fwhm_ev / hc_ev_cm / (2.0 * (2.0 * std::f64::consts::LN_2).sqrt());
    let norm = 1.0 / (sigma * (2.0 * std::f64::consts::PI).sqrt());
    let k = osc_strength_per_integrated_eps();
    let pts: Vec<(f64, f64)> = (0..=1800)
        .map(|i| {
            let nm = 200.0 + 0.5 * i as f64;
            let nu = 1e7 / nm;
            let eps: f64 = bands
                .iter()
                .map(|&(e, f)| {
                    let nu0 = e / hc_ev_cm;
                    f / k * norm * (-0.5 * ((nu - nu0) / sigma).powi(2)).exp()
                })
                .sum();
            (nm, eps)
        })
        .collect();
    Spectrum::new(&pts, Units::Energy)
}

/// Förster radius (nm).
pub fn forster_radius_nm(j: f64, phi_d: f64, n: f64, kappa2: f64) -> f64 {
    r0_prefactor_nm() * (kappa2 * phi_d * j / n.powi(4)).powf(1.0 / 6.0)
}

/// Transfer efficiency at donor–acceptor distance `r_nm`.
pub fn efficiency(r_nm: f64, r0_nm: f64) -> f64 {
    1.0 / (1.0 + (r_nm / r0_nm).powi(6))
}

/// Transfer rate (s⁻¹) for a donor with unquenched lifetime `tau_d_s`.
pub fn rate(r_nm: f64, r0_nm: f64, tau_d_s: f64) -> f64 {
    (r0_nm / r_nm).powi(6) / tau_d_s
}
