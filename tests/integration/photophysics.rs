//! Rates and kinetics against the check values of shared/science.md c (each value's source is
//! named there: Hilborn 1982 for the Einstein A constant; the Marcus and kinetic-scheme values
//! were computed independently) and against a numerical integration of the rate equations.

use lumisift::photophysics::{
    Character, K_B_EV, Level, RateParams, Rates, average_rate, kinetics, manifold_rates,
    marcus_rate, radiative_rate,
};

fn close(a: f64, b: f64, rel: f64) -> bool {
    ((a - b) / b).abs() < rel
}

#[test]
fn radiative_rate_follows_the_einstein_a_constant() {
    // A = 0.667025 · ν̃²[cm⁻¹] · f s⁻¹ (Hilborn, Am. J. Phys. 50, 982 (1982)).
    for &(e, f) in &[(2.5, 0.01), (3.0, 0.3), (1.8, 1.0)] {
        let nu = e / lumisift::photophysics::HC_EV_CM;
        assert!(close(
            radiative_rate(f, e, 1.0),
            0.667025 * nu * nu * f,
            1e-5
        ));
    }
    // science.md c.1 worked example: f = 0.01, E = 2.5 eV → 2.71·10⁶ s⁻¹ (n = 1), 7.84·10⁶ (n = 1.7).
    assert!(close(radiative_rate(0.01, 2.5, 1.0), 2.71e6, 5e-3));
    assert!(close(radiative_rate(0.01, 2.5, 1.7), 7.84e6, 5e-3));
}

#[test]
fn marcus_rates_match_the_check_values() {
    // science.md c.2, T = 300 K, λ = 0.2 eV unless stated (values given to two digits).
    let cases = [
        (0.1, 0.2, 0.05, 2.8e5),
        (0.1, 0.2, 0.20, 2.5e3),
        (0.5, 0.2, 0.05, 7.0e6),
        (0.5, 0.2, 0.20, 6.3e4),
        (1.0, 0.2, 0.05, 2.8e7),
        (1.0, 0.2, 0.20, 2.5e5),
        (1.0, 0.1, 0.05, 9.2e7),
    ];
    for (h, lam, de, want) in cases {
        let k = marcus_rate(h, lam, de, 300.0);
        assert!(
            close(k, want, 0.03),
            "H {h} λ {lam} ΔE {de}: {k:.3e} vs {want:.1e}"
        );
    }
}

#[test]
fn detailed_balance_has_the_spin_factor_of_three() {
    // Equal couplings: k_RISC / k_ISC = ⅓ exp(−ΔE/k_BT) (science.md c.2) — catches factor-3
    // errors in the sublevel sums.
    let p = RateParams::default();
    for de in [0.02, 0.1, 0.25] {
        let s = [Level {
            energy_ev: 3.0,
            f: 0.01,
            character: Character::Ct,
        }];
        let t = [Level {
            energy_ev: 3.0 - de,
            f: 0.0,
            character: Character::Le,
        }];
        let r = manifold_rates(&s, &t, &p);
        let want = (1.0 / 3.0) * (-de / (K_B_EV * 300.0)).exp();
        assert!(close(r.k_risc / r.k_isc, want, 1e-9), "ΔE {de}");
    }
}

#[test]
fn thermalised_manifold_lets_a_bright_s2_lend_intensity() {
    // A dark S1 with a bright S2 1 k_BT above: k_r is the Boltzmann mixture, not S1's.
    let p = RateParams::default();
    let kt = K_B_EV * 300.0;
    let dark = Level {
        energy_ev: 2.8,
        f: 0.0,
        character: Character::Ct,
    };
    let bright = Level {
        energy_ev: 2.8 + kt,
        f: 0.2,
        character: Character::Ct,
    };
    let t = [Level {
        energy_ev: 2.7,
        f: 0.0,
        character: Character::Ct,
    }];
    let r = manifold_rates(&[dark, bright], &t, &p);
    let w2 = (-1.0f64).exp() / (1.0 + (-1.0f64).exp());
    assert!(close(r.k_r, w2 * radiative_rate(0.2, 2.8 + kt, 1.7), 1e-9));
    // A higher local triplet near S1 opens a faster RISC channel (CT↔LE coupling).
    let t2 = [
        t[0],
        Level {
            energy_ev: 2.72,
            f: 0.0,
            character: Character::Le,
        },
    ];
    let r2 = manifold_rates(&[dark, bright], &t2, &p);
    assert!(r2.k_risc > r.k_risc);
}

#[test]
fn kinetic_scheme_matches_the_check_values() {
    // science.md c.4: k_r 2e7, k_nr^S 1e6, k_ISC 5e7, k_RISC 5e5, k_nr^T 1e4 s⁻¹.
    let p = RateParams {
        k_nr_singlet: 1e6,
        k_nr_triplet: 1e4,
        ..RateParams::default()
    };
    let k = kinetics(
        &Rates {
            k_r: 2e7,
            k_isc: 5e7,
            k_risc: 5e5,
        },
        &p,
    );
    assert!(close(k.tau_prompt_s, 14.0e-9, 5e-3), "{}", k.tau_prompt_s);
    assert!(close(k.tau_delayed_s, 6.37e-6, 5e-3), "{}", k.tau_delayed_s);
    assert!((k.phi_prompt - 0.279).abs() < 1e-3);
    assert!((k.phi_delayed - 0.631).abs() < 1e-3);
    assert!((k.phi_pl - 0.910).abs() < 1e-3);
    assert!((k.el_photons_per_exciton - 0.897).abs() < 1e-3);
    assert!(!k.knr_zero_bound);
    // Numerical integration of the same equations (RK4 while the prompt part lives, then the
    // A-stable trapezoidal rule): the integrated emission equals Φ_PL.
    let (ks, kt) = (2e7 + 1e6 + 5e7, 5e5 + 1e4);
    let deriv = |s: f64, t: f64| (-ks * s + 5e5 * t, 5e7 * s - kt * t);
    let (mut s, mut t, mut emitted, mut time) = (1.0, 0.0, 0.0, 0.0);
    let dt = 0.01 / ks;
    while time < 30.0 * k.tau_prompt_s {
        let (a1, b1) = deriv(s, t);
        let (a2, b2) = deriv(s + 0.5 * dt * a1, t + 0.5 * dt * b1);
        let (a3, b3) = deriv(s + 0.5 * dt * a2, t + 0.5 * dt * b2);
        let (a4, b4) = deriv(s + dt * a3, t + dt * b3);
        let s_new = s + dt / 6.0 * (a1 + 2.0 * a2 + 2.0 * a3 + a4);
        emitted += 2e7 * 0.5 * (s + s_new) * dt;
        t += dt / 6.0 * (b1 + 2.0 * b2 + 2.0 * b3 + b4);
        s = s_new;
        time += dt;
    }
    let h = 1e-3 * k.tau_delayed_s;
    while time < 40.0 * k.tau_delayed_s {
        // (I − h/2 M) x' = (I + h/2 M) x, M = [[−ks, 5e5], [5e7, −kt]].
        let (m11, m12, m21, m22) = (-ks, 5e5, 5e7, -kt);
        let (r1, r2) = (
            s + 0.5 * h * (m11 * s + m12 * t),
            t + 0.5 * h * (m21 * s + m22 * t),
        );
        let (a, b, c, d) = (
            1.0 - 0.5 * h * m11,
            -0.5 * h * m12,
            -0.5 * h * m21,
            1.0 - 0.5 * h * m22,
        );
        let det = a * d - b * c;
        let (s_new, t_new) = ((d * r1 - b * r2) / det, (a * r2 - c * r1) / det);
        emitted += 2e7 * 0.5 * (s + s_new) * h;
        s = s_new;
        t = t_new;
        time += h;
    }
    assert!(
        (emitted - k.phi_pl).abs() < 2e-3,
        "integrated {emitted} vs {}",
        k.phi_pl
    );
}

#[test]
fn kinetic_limits() {
    let p = RateParams::default();
    // No reverse crossing: no delayed component.
    let k = kinetics(
        &Rates {
            k_r: 1e7,
            k_isc: 1e7,
            k_risc: 0.0,
        },
        &p,
    );
    assert_eq!(k.phi_delayed, 0.0);
    assert!((k.phi_pl - 0.5).abs() < 1e-12);
    // Very fast reverse crossing without losses: every triplet is harvested.
    let k = kinetics(
        &Rates {
            k_r: 1e7,
            k_isc: 1e7,
            k_risc: 1e12,
        },
        &p,
    );
    assert!((k.triplet_harvesting - 1.0).abs() < 1e-12);
    assert!((k.el_photons_per_exciton - 1.0).abs() < 1e-6);
    assert!(k.knr_zero_bound);
    assert!(
        (k.eqe_bound - 0.2).abs() < 1e-6,
        "γ·1·η_out with the defaults"
    );
}

#[test]
fn rates_are_averaged_per_angle_not_from_the_averaged_gap() {
    // exp is convex: the mean of Marcus rates over a spread of gaps exceeds the rate of the
    // mean gap (Jensen), which is why rates are computed per torsion angle.
    let gaps = [(0.3, 0.02), (0.4, 0.10), (0.3, 0.18)];
    let samples: Vec<(f64, f64)> = gaps
        .iter()
        .map(|&(w, g)| (w, marcus_rate(0.5, 0.2, g, 300.0)))
        .collect();
    let avg = average_rate(&samples);
    let mean_gap: f64 = gaps.iter().map(|g| g.0 * g.1).sum();
    assert!(avg.mean > marcus_rate(0.5, 0.2, mean_gap, 300.0));
    assert!(avg.log10_sd > 0.1);
}

#[test]
fn assessment_uses_torsion_averaged_rates_and_the_band_colour() {
    use lumisift::colour::{D65, analyse, gaussian_band};
    use lumisift::photophysics::{BandParams, assess};
    use lumisift::pi::estimate::{EstimateParams, estimate};
    use lumisift::pi::params::PppParams;
    // A donor–acceptor pair: per-angle rates are averaged (the effective k_r is the weighted
    // mean of the per-angle k_r, plus manifold extras that are never negative).
    let m = lumisift::chem::parse_smiles("N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21").unwrap();
    let est = estimate(&m, &PppParams::default_set(), &EstimateParams::default()).unwrap();
    let p = RateParams::default();
    let band = BandParams::default();
    let a = assess(&est, &p, &band);
    assert!(!est.angle_samples.is_empty());
    assert!(a.rates_effective.k_r >= a.k_r_averaged.mean);
    let n_links = est.links.len() as f64;
    let manual: f64 = est
        .angle_samples
        .iter()
        .map(|s| s.weight / n_links * radiative_rate(s.f_s1, s.s1_ev, p.refractive_index))
        .sum();
    assert!(close(a.k_r_averaged.mean, manual, 1e-9));
    // Kinetics are those of the effective rates.
    assert_eq!(a.kinetics, kinetics(&a.rates_effective, &p));
    // Colour: the Gaussian band at S1 − Stokes shift.
    let c = analyse(
        &gaussian_band(est.s1_ev - band.stokes_shift_ev, band.fwhm_ev).unwrap(),
        D65,
    )
    .unwrap();
    assert_eq!(a.colour.unwrap(), c);
}
