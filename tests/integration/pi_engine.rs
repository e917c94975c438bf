//! The PPP SCF + CIS engine on explicit models.
//!
//! Checks: the Hückel limit (two-electron terms off) against the analytic orbital energies
//! α + xβ of ethylene, butadiene, benzene and naphthalene (textbook HMO values, e.g.
//! E. Heilbronner & H. Bock, The HMO Model and its Application, Wiley 1976; quoted from memory:
//! ethylene ±1; butadiene ±1.618, ±0.618; benzene ±2, ±1 (twice); naphthalene ±2.303, ±1.618,
//! ±1.303, ±1, ±0.618), and the Mataga–Nishimoto PPP-CIS check values of `shared/science.md`
//! a.6 (computed independently) for benzene and naphthalene.

use lumisift::pi::{CisParams, GammaForm, PppModel, ScfParams, cis, scf};

/// A regular polygon of `n` sites with side `d` (Å) in the xy plane.
fn ring(n: usize, d: f64) -> Vec<[f64; 3]> {
    let r = d / (2.0 * (std::f64::consts::PI / n as f64).sin());
    (0..n)
        .map(|k| {
            let t = 2.0 * std::f64::consts::PI * k as f64 / n as f64;
            [r * t.cos(), r * t.sin(), 0.0]
        })
        .collect()
}

fn carbon_model(positions: Vec<[f64; 3]>, bonds: &[(usize, usize)], form: GammaForm) -> PppModel {
    let n = positions.len();
    PppModel {
        positions,
        ip: vec![11.16; n],
        gamma_self: vec![11.13; n],
        core: vec![1.0; n],
        beta: bonds.iter().map(|&(a, b)| (a, b, -2.39)).collect(),
        gamma_form: form,
    }
}

fn cycle_bonds(n: usize) -> Vec<(usize, usize)> {
    (0..n).map(|i| (i, (i + 1) % n)).collect()
}

/// Naphthalene: two regular hexagons sharing the bond 0–5 (C–C = 1.40 Å).
fn naphthalene() -> (Vec<[f64; 3]>, Vec<(usize, usize)>) {
    let d = 1.40;
    let h = d * 3f64.sqrt() / 2.0;
    // Shared bond vertical at x = 0; ring A to the left, ring B to the right.
    let p = vec![
        [0.0, d / 2.0, 0.0],       // 0 shared
        [-h, d, 0.0],              // 1
        [-2.0 * h, d / 2.0, 0.0],  // 2
        [-2.0 * h, -d / 2.0, 0.0], // 3
        [-h, -d, 0.0],             // 4
        [0.0, -d / 2.0, 0.0],      // 5 shared
        [h, -d, 0.0],              // 6
        [2.0 * h, -d / 2.0, 0.0],  // 7
        [2.0 * h, d / 2.0, 0.0],   // 8
        [h, d, 0.0],               // 9
    ];
    let b = vec![
        (0, 1),
        (1, 2),
        (2, 3),
        (3, 4),
        (4, 5),
        (5, 0),
        (5, 6),
        (6, 7),
        (7, 8),
        (8, 9),
        (9, 0),
    ];
    (p, b)
}

fn huckel_x(model: &PppModel) -> Vec<f64> {
    let r = scf(model, &ScfParams::default()).unwrap();
    // ε = α + xβ with α = −I and β = −2.39 (so x = (ε − α)/β).
    let mut x: Vec<f64> = r.energies.iter().map(|e| (e + 11.16) / -2.39).collect();
    x.sort_by(|a, b| b.total_cmp(a));
    x
}

fn assert_close(got: &[f64], want: &[f64], tol: f64, what: &str) {
    assert_eq!(got.len(), want.len(), "{what}: {got:?}");
    for (g, w) in got.iter().zip(want) {
        assert!((g - w).abs() < tol, "{what}: got {got:?}, want {want:?}");
    }
}

#[test]
fn huckel_limit_reproduces_analytic_orbital_energies() {
    let eth = carbon_model(vec![[0.0; 3], [1.34, 0.0, 0.0]], &[(0, 1)], GammaForm::None);
    assert_close(&huckel_x(&eth), &[1.0, -1.0], 1e-10, "ethylene");
    let but = carbon_model(
        (0..4).map(|i| [1.4 * i as f64, 0.0, 0.0]).collect(),
        &[(0, 1), (1, 2), (2, 3)],
        GammaForm::None,
    );
    let phi = (1.0 + 5f64.sqrt()) / 2.0;
    assert_close(
        &huckel_x(&but),
        &[phi, phi - 1.0, 1.0 - phi, -phi],
        1e-10,
        "butadiene",
    );
    let bz = carbon_model(ring(6, 1.397), &cycle_bonds(6), GammaForm::None);
    assert_close(
        &huckel_x(&bz),
        &[2.0, 1.0, 1.0, -1.0, -1.0, -2.0],
        1e-10,
        "benzene",
    );
    let (p, b) = naphthalene();
    let nap = carbon_model(p, &b, GammaForm::None);
    // Analytic naphthalene HMO roots: ±(1+√13)/2, ±(1+√5)/2, ±(√13−1)/2, ±1, ±(√5−1)/2.
    let s13 = 13f64.sqrt();
    let s5 = 5f64.sqrt();
    let mut want = vec![
        (1.0 + s13) / 2.0,
        (1.0 + s5) / 2.0,
        (s13 - 1.0) / 2.0,
        1.0,
        (s5 - 1.0) / 2.0,
    ];
    let neg: Vec<f64> = want.iter().rev().map(|x| -x).collect();
    want.extend(neg);
    assert_close(&huckel_x(&nap), &want, 1e-10, "naphthalene");
}

#[test]
fn benzene_mataga_nishimoto_cis_matches_check_values() {
    // science.md a.6: S 4.907 (f 0), 6.205 (f 0), 7.030 (f 1.20, doubly degenerate); T1 2.490,
    // T2 4.003 — quoted to 1e-3 eV.
    let bz = carbon_model(ring(6, 1.397), &cycle_bonds(6), GammaForm::MatagaNishimoto);
    let r = scf(&bz, &ScfParams::default()).unwrap();
    // Orbital degeneracies (the e1g and e2u pairs).
    assert!((r.energies[1] - r.energies[2]).abs() < 1e-9);
    assert!((r.energies[3] - r.energies[4]).abs() < 1e-9);
    let c = cis(&bz, &r, &CisParams::default());
    let s: Vec<f64> = c.singlets.iter().map(|s| s.energy).collect();
    assert!((s[0] - 4.907).abs() < 1e-3, "{s:?}");
    assert!((s[1] - 6.205).abs() < 1e-3, "{s:?}");
    assert!(
        (s[2] - 7.030).abs() < 1e-3 && (s[3] - 7.030).abs() < 1e-3,
        "{s:?}"
    );
    assert!(c.singlets[0].osc_strength < 1e-10 && c.singlets[1].osc_strength < 1e-10);
    // Only the degenerate pair's summed f is meaningful: 2 × 1.20.
    let f_pair = c.singlets[2].osc_strength + c.singlets[3].osc_strength;
    assert!((f_pair - 2.40).abs() < 0.01, "f pair {f_pair}");
    let t: Vec<f64> = c.triplets.iter().map(|s| s.energy).collect();
    assert!((t[0] - 2.490).abs() < 1e-3, "{t:?}");
    let t2 = t.iter().copied().find(|&e| e > t[0] + 0.1).unwrap();
    assert!((t2 - 4.003).abs() < 1e-3, "{t:?}");
}

#[test]
fn naphthalene_mataga_nishimoto_cis_matches_check_values() {
    // science.md a.6: S 4.140 (f 0), 4.482 (0.249), 5.800 (2.07); T1 1.701, T2 2.899.
    let (p, b) = naphthalene();
    let nap = carbon_model(p, &b, GammaForm::MatagaNishimoto);
    let r = scf(&nap, &ScfParams::default()).unwrap();
    let c = cis(&nap, &r, &CisParams::default());
    let s = &c.singlets;
    assert!((s[0].energy - 4.140).abs() < 1e-3, "{}", s[0].energy);
    assert!(s[0].osc_strength < 1e-3);
    assert!((s[1].energy - 4.482).abs() < 1e-3, "{}", s[1].energy);
    assert!(
        (s[1].osc_strength - 0.249).abs() < 2e-3,
        "{}",
        s[1].osc_strength
    );
    let bright = s.iter().find(|x| x.osc_strength > 1.0).unwrap();
    assert!((bright.energy - 5.800).abs() < 1e-3, "{}", bright.energy);
    assert!((bright.osc_strength - 2.07).abs() < 0.01);
    assert!((c.triplets[0].energy - 1.701).abs() < 1e-3);
    assert!((c.triplets[1].energy - 2.899).abs() < 1e-3);
}

#[test]
fn scf_invariants_hold() {
    let (p, b) = naphthalene();
    let nap = carbon_model(p, &b, GammaForm::MatagaNishimoto);
    let r = scf(&nap, &ScfParams::default()).unwrap();
    let n = nap.n_sites();
    // Orthonormal orbitals.
    let ctc = r.coeffs.transpose() * &r.coeffs;
    for i in 0..n {
        for j in 0..n {
            let want = if i == j { 1.0 } else { 0.0 };
            assert!((ctc[(i, j)] - want).abs() < 1e-10);
        }
    }
    // Trace of P equals the electron count; idempotency P S P = 2P (S = 1).
    assert!((r.density.trace() - 10.0).abs() < 1e-10);
    let pp = &r.density * &r.density;
    assert!((pp - &r.density * 2.0).amax() < 1e-9);
    // Alternant hydrocarbon: uniform charge density (Coulson–Rushbrooke theorem).
    for i in 0..n {
        assert!((r.density[(i, i)] - 1.0).abs() < 1e-8);
    }
    // Odd electron counts are refused.
    let mut bad = nap.clone();
    bad.core[0] = 2.0;
    assert!(scf(&bad, &ScfParams::default()).is_err());
}

/// The same model Hamiltonian solved by PySCF 2.14 (RHF with custom integrals, then TDA),
/// `tests/fixtures/pi/pyscf_ppp.json`, made by `tests/fixtures/pi/make_pyscf_ppp.py`:
/// ethylene, butadiene, benzene (MN and Ohno), naphthalene, pyridine, biphenyl twisted 0/45/90°,
/// and two donor–acceptor pairs at 0/45/90°. Required agreement 1e-4 eV.
#[test]
fn agrees_with_pyscf_on_the_same_model_hamiltonian() {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/pi/pyscf_ppp.json"
    ))
    .unwrap();
    let json: serde_json::Value = serde_json::from_str(&text).unwrap();
    let systems = json["systems"].as_array().unwrap();
    assert!(systems.len() >= 14);
    let mut worst: f64 = 0.0;
    for sys in systems {
        let name = sys["name"].as_str().unwrap();
        let f64s = |k: &str| -> Vec<f64> {
            sys[k]
                .as_array()
                .unwrap()
                .iter()
                .map(|v| v.as_f64().unwrap())
                .collect()
        };
        let positions: Vec<[f64; 3]> = sys["positions"]
            .as_array()
            .unwrap()
            .iter()
            .map(|p| {
                let p = p.as_array().unwrap();
                [
                    p[0].as_f64().unwrap(),
                    p[1].as_f64().unwrap(),
                    p[2].as_f64().unwrap(),
                ]
            })
            .collect();
        let model = PppModel {
            positions,
            ip: f64s("ip"),
            gamma_self: f64s("gamma_self"),
            core: f64s("core_charge"),
            beta: sys["beta"]
                .as_array()
                .unwrap()
                .iter()
                .map(|b| {
                    let b = b.as_array().unwrap();
                    (
                        b[0].as_u64().unwrap() as usize,
                        b[1].as_u64().unwrap() as usize,
                        b[2].as_f64().unwrap(),
                    )
                })
                .collect(),
            gamma_form: match sys["gamma_form"].as_str().unwrap() {
                "Ohno" => GammaForm::Ohno,
                _ => GammaForm::MatagaNishimoto,
            },
        };
        let r = scf(&model, &ScfParams::default()).unwrap();
        let eps = &sys["scf"]["orbital_energies"];
        for (k, e) in eps.as_array().unwrap().iter().enumerate() {
            let d = (r.energies[k] - e.as_f64().unwrap()).abs();
            worst = worst.max(d);
            assert!(d < 1e-6, "{name}: orbital {k} off by {d}");
        }
        let de = (r.e_elec - sys["scf"]["e_elec"].as_f64().unwrap()).abs();
        assert!(de < 1e-6, "{name}: SCF energy off by {de}");
        let c = cis(
            &model,
            &r,
            &CisParams {
                n_roots: 64,
                ..CisParams::default()
            },
        );
        for (key, ours) in [("singlets", &c.singlets), ("triplets", &c.triplets)] {
            for (k, st) in sys[key].as_array().unwrap().iter().enumerate() {
                let d = (ours[k].energy - st["e"].as_f64().unwrap()).abs();
                worst = worst.max(d);
                assert!(d < 1e-4, "{name}: {key} {k} off by {d}");
            }
        }
        // Oscillator strengths: compare degenerate-set sums (only those are meaningful).
        for set in sys["degenerate_singlet_sets"].as_array().unwrap() {
            let e = set["e"].as_f64().unwrap();
            let ours: f64 = c
                .singlets
                .iter()
                .filter(|s| (s.energy - e).abs() < 1e-6)
                .map(|s| s.osc_strength)
                .sum();
            let want = set["f_sum"].as_f64().unwrap();
            assert!(
                (ours - want).abs() < 1e-6,
                "{name}: f at {e} eV: {ours} vs {want}"
            );
        }
        for st in sys["singlets"].as_array().unwrap() {
            let e = st["e"].as_f64().unwrap();
            let degenerate = sys["singlets"]
                .as_array()
                .unwrap()
                .iter()
                .filter(|o| (o["e"].as_f64().unwrap() - e).abs() < 1e-6)
                .count()
                > 1;
            if !degenerate {
                let ours = c
                    .singlets
                    .iter()
                    .find(|s| (s.energy - e).abs() < 1e-6)
                    .unwrap();
                let want = st["f"].as_f64().unwrap();
                assert!((ours.osc_strength - want).abs() < 1e-6, "{name}: f at {e}");
            }
        }
    }
    eprintln!("largest deviation from PySCF: {worst:.2e} eV");
}

/// Davidson's iteration against full diagonalisation (nalgebra) on seeded random symmetric
/// matrices shaped like CIS matrices (dominant, spread diagonal), including exactly degenerate
/// lowest roots (two identical blocks): no root may be missed.
#[test]
fn davidson_finds_the_same_lowest_roots_as_full_diagonalisation() {
    use nalgebra::DMatrix;
    let mut seed = 0x1234_5678_9abc_def0u64;
    let mut rnd = move || {
        seed ^= seed << 13;
        seed ^= seed >> 7;
        seed ^= seed << 17;
        (seed >> 11) as f64 / (1u64 << 53) as f64
    };
    for &(n, degenerate) in &[(320usize, false), (450, false), (400, true)] {
        let half = n / 2;
        let mut a = DMatrix::<f64>::zeros(n, n);
        let fill = |a: &mut DMatrix<f64>, off: usize, m: usize, r: &mut dyn FnMut() -> f64| {
            for i in 0..m {
                a[(off + i, off + i)] = 3.0 + 10.0 * r();
                for j in 0..i {
                    let v = 0.2 * (r() - 0.5);
                    a[(off + i, off + j)] = v;
                    a[(off + j, off + i)] = v;
                }
            }
        };
        if degenerate {
            fill(&mut a, 0, half, &mut rnd);
            let block = a.view((0, 0), (half, half)).into_owned();
            a.view_mut((half, half), (half, half)).copy_from(&block);
        } else {
            fill(&mut a, 0, n, &mut rnd);
        }
        let k = 6;
        let (vals, vecs) = lumisift::pi::lowest_eigenpairs(a.clone(), k);
        let full = nalgebra::SymmetricEigen::new(a.clone());
        let mut ev: Vec<f64> = full.eigenvalues.iter().copied().collect();
        ev.sort_by(|x, y| x.total_cmp(y));
        for j in 0..k {
            assert!(
                (vals[j] - ev[j]).abs() < 1e-8,
                "n {n}: root {j}: {} vs {}",
                vals[j],
                ev[j]
            );
            // A·x = λx for the returned vectors.
            let x = vecs.column(j);
            let r = &a * x - x * vals[j];
            assert!(r.norm() < 1e-4, "residual {}", r.norm());
        }
    }
}

#[test]
fn level_shift_leaves_the_solution_unchanged_and_rescues_a_hard_case() {
    // A level shift (Saunders & Hillier 1973) moves only the virtual space while iterating:
    // the converged energy and orbital energies are the same as without it.
    use lumisift::chem::parse_smiles;
    use lumisift::geometry::layout;
    use lumisift::pi::build::build_model;
    use lumisift::pi::params::PppParams;
    use lumisift::pi::{ScfParams, scf};
    let ppp = PppParams::default_set();
    let m = parse_smiles("N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21").unwrap();
    let built = build_model(&m, &layout(&m), &ppp).unwrap();
    let a = scf(&built.model, &ScfParams::default()).unwrap();
    let b = scf(
        &built.model,
        &ScfParams {
            level_shift: 2.0,
            ..ScfParams::default()
        },
    )
    .unwrap();
    assert!((a.e_elec - b.e_elec).abs() < 1e-7);
    for k in 0..a.energies.len() {
        assert!((a.energies[k] - b.energies[k]).abs() < 1e-5);
    }
    // A D–B–A–B–D whose SCF oscillates at some of its scan geometries (found in the demo
    // campaign): the retries (level shift, then shift + damping) and, failing those, leaving
    // the point out with a flag let the estimate complete instead of losing the candidate.
    let hard = "Cc1cc(ccc1-c1ccc(cc1)S(=O)(=O)c1ccc(cc1)-c1ccc(cc1C)N(c1ccccc1)c1ccccc1)N(c1ccccc1)c1ccccc1";
    let e =
        lumisift::pi::estimate::estimate(&parse_smiles(hard).unwrap(), &ppp, &Default::default());
    let e = e.unwrap_or_else(|err| panic!("{err}"));
    assert!(e.s1_ev.is_finite() && e.avg_s1_ev.is_finite());
    let left_out: usize = e
        .links
        .iter()
        .map(|l| l.scan.iter().filter(|q| !q.1.is_finite()).count())
        .sum();
    assert_eq!(
        left_out > 0,
        e.flags
            .iter()
            .any(|f| f.starts_with("SCF did not converge")),
        "points left out are always flagged"
    );
}
