//! Rates and kinetics against the check values of shared/science.md c (each value's source is
//! named there: Hilborn 1982 for the Einstein A constant; the Marcus and kinetic-scheme values
//! were computed independently) and against a numerical integration of the rate equations.

use lumisift::photophysics::{
    BandParams, Character, F_DARK_FLOOR, K_B_EV, Level, RateParams, Rates, assess, average_rate,
    kinetics, levels, log10_tadf_rate, manifold_rates, manifold_weights, marcus_rate,
    radiative_rate,
};
use lumisift::pi::estimate::{Estimate, EstimateParams, estimate};
use lumisift::pi::params::PppParams;

/// The π-tier estimate of a carbazole–benzonitrile donor–acceptor pair (torsion-averaged).
fn cz_bn() -> Estimate {
    let m = lumisift::chem::parse_smiles("N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21").unwrap();
    estimate(&m, &PppParams::default_set(), &EstimateParams::default()).unwrap()
}

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
    // A donor–acceptor pair: per-angle rates are averaged (the effective k_r is S1's
    // Boltzmann share of the singlet manifold times the weighted mean of the per-angle k_r,
    // plus the higher singlets' own shares, which are never negative).
    let est = cz_bn();
    let p = RateParams::default();
    let band = BandParams::default();
    let a = assess(&est, &p, &band);
    assert!(!est.angle_samples.is_empty());
    let s = levels(&est.singlets);
    let w_s1 = manifold_weights(&s, &p)[0];
    assert!(a.rates_effective.k_r >= w_s1 * a.k_r_averaged.mean * (1.0 - 1e-12));
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

#[test]
fn a_dark_s2_in_the_window_dilutes_k_r_and_a_bright_one_raises_it() {
    // Thermalised singlets: with S2 one k_BT above S1 (inside the 3 k_BT window), S1 holds
    // only w_S1 = 1/(1 + e⁻¹) of the singlet population. A dark S2 therefore lowers the
    // effective k_r by exactly that share (Boltzmann dilution of the emitting population);
    // a bright S2 adds w_S2·k_r(S2). The torsion average of the S1/T1 pair is kept.
    let mut est = cz_bn();
    let (p, band) = (RateParams::default(), BandParams::default());
    let kt = K_B_EV * p.temperature_k;
    let s1 = est.singlets[0].clone();
    est.singlets = vec![s1.clone()];
    let alone = assess(&est, &p, &band);
    // Alone in its window, S1's effective k_r is the torsion average itself.
    assert!(close(
        alone.rates_effective.k_r,
        alone.k_r_averaged.mean,
        1e-12
    ));
    let mut s2 = s1.clone();
    s2.energy_ev = s1.energy_ev + kt;
    s2.osc_strength = 0.0;
    est.singlets = vec![s1.clone(), s2.clone()];
    let dark = assess(&est, &p, &band);
    let w1 = 1.0 / (1.0 + (-1.0f64).exp());
    assert!(dark.rates_effective.k_r < alone.rates_effective.k_r);
    assert!(close(
        dark.rates_effective.k_r,
        w1 * alone.rates_effective.k_r,
        1e-9
    ));
    s2.osc_strength = 0.5;
    est.singlets = vec![s1.clone(), s2.clone()];
    let bright = assess(&est, &p, &band);
    let k_s2 = radiative_rate(0.5, s2.energy_ev, p.refractive_index);
    assert!(bright.rates_effective.k_r > alone.rates_effective.k_r);
    assert!(close(
        bright.rates_effective.k_r,
        w1 * alone.rates_effective.k_r + (1.0 - w1) * k_s2,
        1e-9
    ));
    // A dark S2 beyond the window changes nothing.
    s2.energy_ev = s1.energy_ev + 3.5 * kt;
    s2.osc_strength = 0.0;
    est.singlets = vec![s1, s2];
    let far = assess(&est, &p, &band);
    assert!(close(
        far.rates_effective.k_r,
        alone.rates_effective.k_r,
        1e-12
    ));
}

#[test]
fn rate_and_band_settings_are_validated_with_the_key_named() {
    assert!(RateParams::default().validate().is_ok());
    assert!(BandParams::default().validate().is_ok());
    let bad = [
        RateParams {
            refractive_index: 0.9,
            ..RateParams::default()
        },
        RateParams {
            temperature_k: 0.0,
            ..RateParams::default()
        },
        RateParams {
            reorganisation_ev: f64::NAN,
            ..RateParams::default()
        },
        RateParams {
            k_nr_triplet: -1.0,
            ..RateParams::default()
        },
        RateParams {
            outcoupling: 1.2,
            ..RateParams::default()
        },
        RateParams {
            soc_le_le_cm: -0.1,
            ..RateParams::default()
        },
    ];
    let keys = [
        "refractive_index",
        "temperature_k",
        "reorganisation_ev",
        "k_nr_triplet",
        "outcoupling",
        "soc_le_le_cm",
    ];
    for (p, key) in bad.iter().zip(keys) {
        let e = p.validate().unwrap_err();
        assert!(e.starts_with(key), "{e}");
    }
    let e = BandParams {
        fwhm_ev: 0.0,
        ..BandParams::default()
    }
    .validate()
    .unwrap_err();
    assert!(e.starts_with("fwhm_ev"), "{e}");
    let e = BandParams {
        stokes_shift_ev: -0.1,
        ..BandParams::default()
    }
    .validate()
    .unwrap_err();
    assert!(e.starts_with("stokes_shift_ev"), "{e}");
}

#[test]
fn the_merit_floors_a_dark_state_at_f_dark_floor() {
    let (n, t) = (1.7, 300.0);
    let want = radiative_rate(F_DARK_FLOOR, 3.0, n).log10() - 3f64.log10();
    assert!((log10_tadf_rate(3.0, 0.0, 0.0, n, t) - want).abs() < 1e-12);
    assert!((log10_tadf_rate(3.0, -0.1, -0.5, n, t) - want).abs() < 1e-12);
}
