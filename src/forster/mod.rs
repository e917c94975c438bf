//! Förster resonance energy transfer from a sensitiser (donor emission) to a terminal emitter
//! (acceptor absorption): spectral overlap integral, Förster radius, transfer efficiency and
//! rate. Pure functions on spectra.
//!
//! R₀⁶ = 9 ln10 κ² Φ_D J / (128 π⁵ N_A n⁴), J = ∫ I_D(λ) ε_A(λ) λ⁴ dλ with ∫ I_D dλ = 1 and ε_A
//! the molar decadic absorption coefficient; k_T = (1/τ_D)(R₀/r)⁶; E = 1/(1 + (r/R₀)⁶)
//! (IUPAC Gold Book, "Förster resonance energy transfer", Braslavsky et al., Pure Appl. Chem.
//! 79, 293 (2007); its practical form R₀/nm = 0.02108 [κ² Φ_D n⁻⁴ J/(M⁻¹ cm⁻¹ nm⁴)]^(1/6)).

use crate::colour::Spectrum;

/// Avogadro constant (mol⁻¹, CODATA 2018 exact).
const N_A: f64 = 6.022_140_76e23;

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
