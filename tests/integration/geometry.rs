//! Geometry: layout against idealised bond lengths (values in `geometry::lengths`, Allen et al.
//! 1987), ring shapes, sp3 lift, hydrogens, rotation about a link bond, and the writers. Rings
//! are regular polygons with the mean ideal side, so a non-aromatic ring mixing bond kinds
//! (acridan's central ring) deviates by up to about 0.1 Å: the tolerance says so.

use lumisift::chem::{AtomIdx, parse_smiles};
use lumisift::geometry::{
    ideal_length, layout, rotate_about_bond, sdf_block, with_hydrogens, xyz_block,
};

fn d(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

/// Largest deviation of any bond from its ideal length.
fn worst_bond(smiles: &str) -> f64 {
    let m = parse_smiles(smiles).unwrap();
    let c = layout(&m);
    m.graph
        .edge_indices()
        .map(|e| {
            let (a, b) = m.graph.edge_endpoints(e).unwrap();
            let want = ideal_length(
                m.atom(a).element,
                m.atom(b).element,
                m.bond(e),
                m.atom(a).aromatic,
                m.atom(b).aromatic,
            );
            (d(c.points[a.index()], c.points[b.index()]) - want).abs()
        })
        .fold(0.0, f64::max)
}

#[test]
fn bond_lengths_follow_the_ideal_values() {
    for (smi, tol) in [
        ("c1ccccc1", 1e-9),
        ("c1ccc2ccccc2c1", 1e-9),
        ("c1cc2ccc3cccc4ccc(c1)c2c34", 1e-9), // pyrene, peri-fused
        ("c1ccc(cc1)-c1ccccc1", 1e-9),
        ("N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21", 0.05), // a pentagon fused to hexagons
        ("CC1(C)c2ccccc2Nc2ccccc21", 0.12),          // regular hexagon, mixed bond lengths
        ("CCCCCCCC", 1e-9),
        ("C1CC2(CC1)CCCC2", 1e-9), // spiro
    ] {
        let w = worst_bond(smi);
        assert!(w <= tol, "{smi}: worst bond deviation {w}");
    }
}

#[test]
fn every_fixture_molecule_is_laid_out_without_collapsed_atoms() {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/rdkit_molecules.jsonl"
    ))
    .unwrap();
    for line in text.lines().take(200) {
        let v: serde_json::Value = serde_json::from_str(line).unwrap();
        let m = parse_smiles(v["rdkit_canonical"].as_str().unwrap()).unwrap();
        let c = layout(&m);
        assert_eq!(c.points.len(), m.atom_count());
        // Bonded atoms at their bond length (never on top of each other), all finite.
        for e in m.graph.edge_indices() {
            let (a, b) = m.graph.edge_endpoints(e).unwrap();
            let r = d(c.points[a.index()], c.points[b.index()]);
            assert!(r > 0.9 && r < 2.2, "{}: bond of {r} Å", v["id"]);
        }
        assert!(c.points.iter().flatten().all(|x| x.is_finite()));
    }
}

#[test]
fn acridan_methyls_leave_the_ring_plane_and_hydrogens_are_placed() {
    let m = parse_smiles("CC1(C)c2ccccc2Nc2ccccc21").unwrap();
    let c = layout(&m);
    let methyls: Vec<usize> = m
        .atoms()
        .filter(|&a| m.atom(a).element == 6 && m.atom(a).hydrogens == 3)
        .map(|a| a.index())
        .collect();
    assert_eq!(methyls.len(), 2);
    let z: Vec<f64> = methyls.iter().map(|&a| c.points[a][2]).collect();
    assert!(
        z[0] * z[1] < 0.0 && z[0].abs() > 1.0,
        "one above, one below: {z:?}"
    );
    let (mh, ch) = with_hydrogens(&m, &c);
    assert_eq!(mh.atom_count(), m.atom_count() + 15, "C15H15N");
    // Every H at its X–H length from its heavy atom, and no H on top of another atom.
    for a in mh.atoms() {
        if mh.atom(a).element != 1 {
            continue;
        }
        let (p, _) = mh.neighbours(a).next().unwrap();
        let r = d(ch.points[a.index()], ch.points[p.index()]);
        assert!(
            (r - 1.08).abs() < 0.02 || (r - 1.01).abs() < 0.02,
            "X–H {r}"
        );
        for b in mh.atoms() {
            if b != a {
                assert!(d(ch.points[a.index()], ch.points[b.index()]) > 0.9);
            }
        }
    }
}

#[test]
fn rotation_about_a_link_sets_the_dihedral() {
    let m = parse_smiles("c1ccc(cc1)-c1ccccc1").unwrap();
    let mut c = layout(&m);
    let link = m
        .graph
        .edge_indices()
        .find(|&e| !m.bond(e).aromatic)
        .unwrap();
    let (a, b) = m.graph.edge_endpoints(link).unwrap();
    assert!(rotate_about_bond(
        &m,
        &mut c.points,
        a.index(),
        b.index(),
        44.4f64.to_radians()
    ));
    // Dihedral between an ortho atom on each side.
    let oa = m.neighbours(a).find(|&(x, _)| x != b).unwrap().0;
    let ob = m.neighbours(b).find(|&(x, _)| x != a).unwrap().0;
    let p = |i: AtomIdx| c.points[i.index()];
    let dihedral = {
        let b1 = sub(p(a), p(oa));
        let b2 = sub(p(b), p(a));
        let b3 = sub(p(ob), p(b));
        let n1 = cross(b1, b2);
        let n2 = cross(b2, b3);
        let cos = dot(n1, n2) / (dot(n1, n1).sqrt() * dot(n2, n2).sqrt());
        cos.clamp(-1.0, 1.0).acos().to_degrees()
    };
    let folded = dihedral.min(180.0 - dihedral);
    assert!((folded - 44.4).abs() < 1e-6, "dihedral {dihedral}");
    // Bond lengths are unchanged by the rotation.
    assert!((d(p(a), p(b)) - 1.49).abs() < 1e-9);
    // A ring bond cannot be rotated about.
    let ring_bond = m
        .graph
        .edge_indices()
        .find(|&e| m.bond(e).aromatic)
        .unwrap();
    let (x, y) = m.graph.edge_endpoints(ring_bond).unwrap();
    assert!(!rotate_about_bond(
        &m,
        &mut c.points,
        x.index(),
        y.index(),
        1.0
    ));
}

fn sub(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}
fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}
fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

#[test]
fn xyz_and_sdf_writers_round_trip_the_structure() {
    let m = parse_smiles("C[n+]1ccccc1.[2H]c1ccccc1").unwrap();
    let c = layout(&m);
    let (mh, ch) = with_hydrogens(&m, &c);
    let xyz = xyz_block(&mh, &ch, "test");
    let lines: Vec<&str> = xyz.lines().collect();
    assert_eq!(lines[0].trim().parse::<usize>().unwrap(), mh.atom_count());
    assert_eq!(lines.len(), mh.atom_count() + 2);
    let sdf = sdf_block(&mh, &ch, "test", &[("formula", "C12H14DN+".into())]);
    let sl: Vec<&str> = sdf.lines().collect();
    // Counts line: atoms and bonds, V2000.
    assert!(sl[3].ends_with("V2000"));
    assert_eq!(
        sl[3][0..3].trim().parse::<usize>().unwrap(),
        mh.atom_count()
    );
    assert_eq!(
        sl[3][3..6].trim().parse::<usize>().unwrap(),
        mh.bond_count()
    );
    assert!(sdf.contains("M  CHG  1"));
    assert!(sdf.contains("M  ISO  1"));
    assert!(sdf.contains(">  <formula>\nC12H14DN+"));
    assert!(sdf.trim_end().ends_with("$$$$"));
}

#[test]
fn every_shipped_donor_acceptor_pair_has_a_clash_free_twist() {
    // Every D–A product of the shipped fragment library, rotated only about its links: at the
    // sterically best twists (15° grid, two coordinate-descent sweeps, steric term only) no
    // non-bonded heavy atoms are closer than 2.5 Å and no hydrogens closer than 1.7 Å (the
    // limits of the rigid-assembly clash check; common practice for rigid-rotor builds).
    use lumisift::combine::{EnumerateParams, Enumerator, TupleEvent, assemble};
    use lumisift::geometry::steric::{clashes, side_repulsion};
    use lumisift::geometry::{branch, layout, rotate_about_bond, with_hydrogens};
    use lumisift::model::Architecture;
    use std::ops::ControlFlow;
    let lib = lumisift::fragments::load_paths(&[
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("fragments")
    ])
    .unwrap();
    let p = EnumerateParams {
        architectures: vec![Architecture::DA],
        max_mol_weight: 1.0e6,
        max_heavy_atoms: 100_000,
        ..EnumerateParams::default()
    };
    // Fragments whose rigid build cannot be clash-free: the rule of this check is that every
    // other pair is, and `estimate` flags the clash for these (see the note beside each).
    const KNOWN_CROWDED: [(&str, &str); 2] = [
        (
            "11-phenylindolo-2-3-a-carbazol-12-yl",
            "its N-phenyl and the link at N12 share the bay of a rigid planar core; real \
             structures distort the core, which rigid units cannot",
        ),
        (
            "dimesitylboryl",
            "on an amine N (B–N bond) the mesityl methyls meet the N-aryl hydrogens at \
             1.64–1.69 Å on the 15° grid; real B–N compounds splay their bond angles",
        ),
    ];
    let mut checked = 0;
    let mut known_clashing = 0;
    let mut bad = Vec::new();
    Enumerator::new(&lib, &p).unwrap().for_each(|e| {
        if let TupleEvent::Admitted(t) = e {
            let mol = assemble(&lib, &t).mol;
            let ls = lumisift::pi::estimate::links(&mol);
            let base = layout(&mol);
            let mut tw = vec![45.0; ls.len()];
            let place = |tw: &[f64]| {
                let mut c = base.clone();
                for (&(a, b), &t) in ls.iter().zip(tw) {
                    rotate_about_bond(&mol, &mut c.points, a, b, t.to_radians());
                }
                c
            };
            for _ in 0..2 {
                for k in 0..ls.len() {
                    let mut best = (f64::INFINITY, 0.0);
                    for s in 0..=12 {
                        let mut t2 = tw.clone();
                        t2[k] = s as f64 * 15.0;
                        let (mh, ch) = with_hydrogens(&mol, &place(&t2));
                        let mut side = vec![false; mh.atom_count()];
                        for x in branch(&mh, ls[k].0, ls[k].1) {
                            side[x] = true;
                        }
                        let e = side_repulsion(&mh, &ch, &side);
                        if e < best.0 {
                            best = (e, t2[k]);
                        }
                    }
                    tw[k] = best.1;
                }
            }
            let (mh, ch) = with_hydrogens(&mol, &place(&tw));
            let c = clashes(&mh, &ch);
            let ids: Vec<&str> = t
                .fragment_indices()
                .iter()
                .map(|&f| lib.fragments[f].id.as_str())
                .collect();
            let known = KNOWN_CROWDED.iter().any(|(id, _)| ids.contains(id));
            if !c.is_empty() && known {
                known_clashing += 1;
            } else if !c.is_empty() {
                bad.push(format!(
                    "{} at {:?}: {:?}",
                    lumisift::chem::canonical_smiles(&mol),
                    tw,
                    &c[..c.len().min(3)]
                ));
            }
            checked += 1;
        }
        ControlFlow::Continue(())
    });
    eprintln!("{checked} D–A pairs checked, {known_clashing} with a known-crowded fragment clash");
    assert!(checked > 1000, "{checked}");
    assert!(
        bad.is_empty(),
        "{} of {checked} clash:\n{}",
        bad.len(),
        bad.join("\n")
    );
}

/// Every coordinate displaced by a seeded uniform amount in ±`jitter` Å.
fn jitter(atoms: &mut [(u8, [f64; 3])], jitter: f64, seed: u64) {
    let mut state = seed ^ 0x9E37_79B9_7F4A_7C15;
    for (_, p) in atoms.iter_mut() {
        for c in p.iter_mut() {
            // 64-bit LCG (Knuth's MMIX constants); the top 53 bits as a uniform in [0, 1).
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            let u = (state >> 11) as f64 / (1u64 << 53) as f64;
            *c += (2.0 * u - 1.0) * jitter;
        }
    }
}

#[test]
fn perceived_skeletons_match_the_candidate_and_only_it() {
    // Candidates of the shipped library (every 37th D–A and D–A–D product, deterministic); the
    // geometry stage's equilibrium-twist XYZ (as `inspect --write-xyz` writes it) with every
    // coordinate displaced by up to ±0.05 Å per coordinate (the size of force-field vs DFT differences;
    // common practice) is read back and perceived (Cordero covalent radii + 0.4 Å); its key
    // must equal the key of the candidate's SMILES graph and no other sampled candidate's.
    use lumisift::combine::{EnumerateParams, Enumerator, TupleEvent, assemble};
    use lumisift::geometry::perceive::{skeleton_from_coordinates, skeleton_key, skeleton_of};
    use lumisift::model::Architecture;
    use lumisift::pi::estimate::{EstimateParams, estimate};
    use lumisift::pi::params::PppParams;
    use std::ops::ControlFlow;
    let lib = lumisift::fragments::load_paths(&[
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("fragments")
    ])
    .unwrap();
    let p = EnumerateParams {
        architectures: vec![Architecture::DA, Architecture::DAD],
        ..EnumerateParams::default()
    };
    let mut mols = Vec::new();
    let mut k = 0usize;
    Enumerator::new(&lib, &p).unwrap().for_each(|e| {
        if let TupleEvent::Admitted(t) = e {
            k += 1;
            if k.is_multiple_of(37) {
                mols.push(assemble(&lib, &t).mol);
            }
        }
        if mols.len() >= 16 {
            ControlFlow::Break(())
        } else {
            ControlFlow::Continue(())
        }
    });
    assert_eq!(mols.len(), 16);
    let ppp = PppParams::default_set();
    let keys: Vec<String> = mols.iter().map(|m| skeleton_key(&skeleton_of(m))).collect();
    for (i, m) in mols.iter().enumerate() {
        let est = estimate(m, &ppp, &EstimateParams::default()).unwrap();
        let text = lumisift::report::inspect::geometry_xyz(m, &est, "perception test");
        let mut atoms: Vec<(u8, [f64; 3])> = lumisift::geometry::parse_xyz(&text)
            .unwrap()
            .into_iter()
            .map(|a| {
                (
                    lumisift::chem::element::from_symbol(&a.symbol).unwrap(),
                    a.position,
                )
            })
            .collect();
        jitter(&mut atoms, 0.05, i as u64);
        let key = skeleton_key(&skeleton_from_coordinates(&atoms).unwrap());
        let canonical = lumisift::chem::canonical_smiles(m);
        assert_eq!(key, keys[i], "{canonical}");
        for (j, other) in keys.iter().enumerate() {
            assert!(
                j == i || *other != key,
                "{canonical} also matches candidate {j}"
            );
        }
    }
    // Broken input is an error naming the atom, never a panic.
    let err = skeleton_from_coordinates(&[(6, [0.0; 3]), (6, [0.1, 0.0, 0.0])]).unwrap_err();
    assert!(err.contains("atoms 1 and 2"), "{err}");
    let err = skeleton_from_coordinates(&[(6, [0.0; 3]), (1, [5.0, 0.0, 0.0])]).unwrap_err();
    assert!(err.contains("atom 2 (H)"), "{err}");
}
