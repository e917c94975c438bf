//! The donor–acceptor trade-off in the π tier, on molecules laid out by our own geometry
//! stage. The physics relied on (shared/science.md a.1, from the general CIS property): for a
//! charge-transfer (CT) state the singlet–triplet splitting is 2K, K the exchange integral of
//! the hole and electron densities, and f ∝ |⟨hole|r|electron⟩|²; twisting the donor against the
//! acceptor decouples the two, so both fall as the twist goes from 0° to 90°, and under ZDO both
//! vanish at exactly 90° for a single twisted bond.

use lumisift::chem::parse_smiles;
use lumisift::geometry::{layout, rotate_about_bond};
use lumisift::pi::analysis::characterise;
use lumisift::pi::build::build_model;
use lumisift::pi::estimate::{links, units};
use lumisift::pi::params::PppParams;
use lumisift::pi::{CisParams, cis, scf};

struct Point {
    /// 2K of the HOMO → LUMO configuration: its singlet–triplet splitting.
    two_k_hl: f64,
    /// Oscillator strength of the HOMO → LUMO configuration.
    f_hl: f64,
    s_ct: f64,
    t_ct: f64,
    f_ct: f64,
    ct_number: f64,
    s1: f64,
    s1_ct: f64,
}

/// Energies of the CT singlet and triplet (full CIS).
fn scan_point(smiles: &str, twist_deg: f64) -> Point {
    let mol = parse_smiles(smiles).unwrap();
    let mut c = layout(&mol);
    let l = links(&mol);
    for &(a, b) in &l {
        assert!(rotate_about_bond(
            &mol,
            &mut c.points,
            a,
            b,
            twist_deg.to_radians()
        ));
    }
    let unit_of = units(&mol, &l);
    let n_units = unit_of.iter().max().unwrap() + 1;
    let params = PppParams::default_set();
    let built = build_model(&mol, &c, &params).unwrap();
    let site_unit: Vec<usize> = built.site_atom.iter().map(|&a| unit_of[a]).collect();
    let r = scf(&built.model, &Default::default()).unwrap();
    let x = cis(
        &built.model,
        &r,
        &CisParams {
            n_roots: 1000,
            ..Default::default()
        },
    );
    // HOMO → LUMO configuration: exchange K_HL = Σ c_μH c_μL c_νH c_νL γ_μν and the transition
    // dipole √2 Σ c_μH c_μL r_μ (science.md a.1).
    let (h, l) = (r.nocc - 1, r.nocc);
    let n = built.model.n_sites();
    let rho: Vec<f64> = (0..n)
        .map(|m| r.coeffs[(m, h)] * r.coeffs[(m, l)])
        .collect();
    let mut k_hl = 0.0;
    for m in 0..n {
        for v in 0..n {
            k_hl += rho[m] * rho[v] * r.gamma[(m, v)];
        }
    }
    let mut d = [0.0; 3];
    for (m, p) in built.model.positions.iter().enumerate() {
        for k in 0..3 {
            d[k] += std::f64::consts::SQRT_2 * rho[m] * p[k];
        }
    }
    let e_hl = r.energies[l] - r.energies[h];
    let d2 = (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]) / (lumisift::pi::BOHR_ANGSTROM.powi(2));
    let f_hl = 2.0 / 3.0 * e_hl / lumisift::pi::HARTREE_EV * d2;
    // The CT states: the lowest singlet and triplet with a CT number of at least 0.9 (states
    // come in ascending energy), else the one of largest CT number.
    let pick = |states: &[lumisift::pi::ExcitedState]| {
        let all: Vec<(lumisift::pi::ExcitedState, f64)> = states
            .iter()
            .map(|s| (s.clone(), characterise(&r, &x, s, &site_unit, n_units).ct))
            .collect();
        all.iter()
            .find(|(_, ct)| *ct >= 0.9)
            .cloned()
            .unwrap_or_else(|| {
                all.iter()
                    .max_by(|a, b| a.1.total_cmp(&b.1))
                    .cloned()
                    .unwrap()
            })
    };
    let (s, ct) = pick(&x.singlets);
    let (t, _) = pick(&x.triplets);
    Point {
        two_k_hl: 2.0 * k_hl,
        f_hl,
        s_ct: s.energy,
        t_ct: t.energy,
        f_ct: s.osc_strength,
        ct_number: ct,
        s1: x.singlets[0].energy,
        s1_ct: characterise(&r, &x, &x.singlets[0], &site_unit, n_units).ct,
    }
}

#[test]
fn ct_gap_and_oscillator_strength_fall_with_twist() {
    // 4-(carbazol-9-yl)benzonitrile, one twisted N–C(aryl) bond.
    let smi = "N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21";
    let angles = [0.0, 15.0, 30.0, 45.0, 60.0, 75.0, 90.0];
    let pts: Vec<Point> = angles.iter().map(|&a| scan_point(smi, a)).collect();
    for (a, p) in angles.iter().zip(&pts) {
        eprintln!(
            "θ = {a:>4}: 2K_HL {:.4} f_HL {:.4} | CT pair S {:.4} T {:.4} f {:.2e} (CT {:.3}) | S1 {:.4} (CT {:.3})",
            p.two_k_hl, p.f_hl, p.s_ct, p.t_ct, p.f_ct, p.ct_number, p.s1, p.s1_ct
        );
    }
    // The HOMO → LUMO (charge-transfer) configuration: its singlet–triplet splitting 2K and its
    // oscillator strength fall monotonically with the twist.
    for w in pts.windows(2) {
        assert!(w[1].two_k_hl < w[0].two_k_hl, "2K_HL must fall with twist");
        assert!(w[1].f_hl < w[0].f_hl, "f_HL must fall with twist");
    }
    // At 90° the CT singlet and triplet are pure CT, degenerate and dark; S1 turns from a
    // partly CT state at 0° to a local one as the twist decouples the units.
    let last = pts.last().unwrap();
    assert!(last.two_k_hl < 1e-10 && last.f_hl < 1e-10);
    assert!(last.ct_number > 0.999, "pure CT at 90°");
    assert!(
        (last.s_ct - last.t_ct).abs() < 1e-8,
        "ΔE(CT) at 90°: {}",
        last.s_ct - last.t_ct
    );
    assert!(last.f_ct < 1e-10, "f(CT) at 90°: {}", last.f_ct);
    assert!(pts[0].s1_ct > pts[6].s1_ct);
}

#[test]
fn energies_do_not_depend_on_atom_numbering() {
    let a = scan_point("N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21", 50.0);
    let b = scan_point("c1ccc2c(c1)c1ccccc1n2-c1ccc(cc1)C#N", 50.0);
    assert!((a.s1 - b.s1).abs() < 1e-8, "{} vs {}", a.s1, b.s1);
    assert!((a.s_ct - b.s_ct).abs() < 1e-8);
    assert!((a.t_ct - b.t_ct).abs() < 1e-8);
}

#[test]
fn s1_hole_sits_on_the_donor_and_electron_on_the_acceptor_when_twisted() {
    // A CT state of a perpendicular D–A pair puts the hole on the donor and the electron on the
    // acceptor (the Ω analysis above, resolved by atom); populations sum to 1 and vanish on
    // atoms without a π site (the nitrile N keeps its own site; none here lacks one).
    use lumisift::pi::estimate::{EstimateParams, estimate};
    let mol = parse_smiles("N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21").unwrap();
    let est = estimate(
        &mol,
        &PppParams::default_set(),
        &EstimateParams {
            twist_deg: Some(90.0),
            ..EstimateParams::default()
        },
    )
    .unwrap();
    let (h, e) = (&est.s1_hole_by_atom, &est.s1_electron_by_atom);
    assert_eq!(h.len(), mol.atom_count());
    assert!((h.iter().sum::<f64>() - 1.0).abs() < 1e-9);
    assert!((e.iter().sum::<f64>() - 1.0).abs() < 1e-9);
    assert!(h.iter().chain(e.iter()).all(|&x| x >= 0.0));
    let on = |role: &str, v: &[f64]| -> f64 {
        est.units
            .iter()
            .filter(|u| u.role == role)
            .flat_map(|u| u.atoms.iter())
            .map(|&a| v[a])
            .sum()
    };
    assert!(on("donor", h) > 0.95, "hole on donor {}", on("donor", h));
    assert!(
        on("acceptor", e) > 0.95,
        "electron on acceptor {}",
        on("acceptor", e)
    );
}
