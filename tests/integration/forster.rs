//! Förster transfer: the constant of the practical formula (IUPAC Gold Book, Braslavsky et al.,
//! Pure Appl. Chem. 79, 293 (2007), note 3: R₀/nm = 0.02108·[κ² Φ_D n⁻⁴ J]^(1/6), J in
//! M⁻¹ cm⁻¹ nm⁴), an analytic overlap integral, and the efficiency/rate relations.

use lumisift::colour::{Spectrum, Units};
use lumisift::forster::{
    KAPPA2_ISOTROPIC, efficiency, forster_radius_nm, overlap_integral, r0_prefactor_nm, rate,
};

#[test]
fn prefactor_equals_the_gold_book_constant() {
    // Derived here from 9 ln10/(128 π⁵ N_A) and the units; the Gold Book quotes 0.02108.
    assert!(
        (r0_prefactor_nm() - 0.02108).abs() < 1e-5,
        "{}",
        r0_prefactor_nm()
    );
}

#[test]
fn overlap_integral_of_a_gaussian_donor_and_a_flat_acceptor_is_its_fourth_moment() {
    // Donor: Gaussian in λ (μ 500 nm, σ 20 nm), any scale; acceptor ε = 5·10⁴ M⁻¹ cm⁻¹ flat:
    // J = ε ⟨λ⁴⟩ = ε (μ⁴ + 6μ²σ² + 3σ⁴) (moments of a normal distribution).
    let (mu, sig, eps): (f64, f64, f64) = (500.0, 20.0, 5e4);
    let donor: Vec<(f64, f64)> = (0..=4000)
        .map(|k| {
            let l = 300.0 + k as f64 * 0.1;
            (l, 7.0 * (-0.5 * ((l - mu) / sig).powi(2)).exp())
        })
        .collect();
    let acc = vec![(200.0, eps), (900.0, eps)];
    let j = overlap_integral(
        &Spectrum::new(&donor, Units::Energy).unwrap(),
        &Spectrum::new(&acc, Units::Energy).unwrap(),
    )
    .unwrap();
    let want = eps * (mu.powi(4) + 6.0 * mu * mu * sig * sig + 3.0 * sig.powi(4));
    assert!(((j - want) / want).abs() < 1e-6, "{j:e} vs {want:e}");
}

#[test]
fn radius_efficiency_and_rate_follow_the_definitions() {
    // J = 10¹⁵ M⁻¹ cm⁻¹ nm⁴, κ² = 2/3, Φ_D = 1, n = 1.4: the practical formula gives
    // 0.02108 × (2/3 × 10¹⁵ / 1.4⁴)^(1/6) nm (computed with the Gold Book constant).
    let r0 = forster_radius_nm(1e15, 1.0, 1.4, KAPPA2_ISOTROPIC);
    let gold = 0.02108 * (2.0 / 3.0 * 1e15 / 1.4f64.powi(4)).powf(1.0 / 6.0);
    assert!(((r0 - gold) / gold).abs() < 5e-4, "{r0} vs {gold}");
    assert!((efficiency(r0, r0) - 0.5).abs() < 1e-12);
    // k_T τ_D = (R₀/r)⁶ and E = k_T/(k_T + 1/τ_D).
    let (r, tau) = (0.8 * r0, 5e-6);
    let k = rate(r, r0, tau);
    assert!((efficiency(r, r0) - k / (k + 1.0 / tau)).abs() < 1e-12);
}
