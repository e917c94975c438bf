//! The combiner against an independent reference and against counting formulas.
//!
//! Reference: `tests/fixtures/combine/products.json`, the products of the same joins made with
//! RDKit 2026.09.1 (`Chem.molzip`) on `tests/fixtures/combine/small_library.toml`, by
//! `tests/fixtures/combine/make_products.py` (not run by CI). We canonicalise RDKit's strings
//! with our own code and compare sets.
//!
//! Counting formulas (Burnside's lemma: the number of orbits is the average number of
//! assignments fixed by each symmetry of the core's sites): m donor types on a two-site core
//! whose sites are exchanged by a symmetry give m(m+1)/2; on a core without that symmetry m²;
//! three equivalent sites under the full permutation group (1,3,5-triazine-triyl), all filled,
//! C(m+2, 3); the four sites of isophthalonitrile-2,4,5,6-tetrayl have one mirror swapping two
//! of them, giving (m⁴ + m³)/2 when all four are filled.

use std::collections::BTreeSet;
use std::ops::ControlFlow;
use std::path::Path;

use lumisift::chem::{canonical_smiles, parse_smiles};
use lumisift::combine::{DnAMode, EnumerateParams, Enumerator, RoleFilter, TupleEvent, assemble};
use lumisift::fragments::{Library, load_paths};
use lumisift::model::Architecture;
use serde_json::Value;

fn fixture() -> (Library, Value) {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/combine");
    let lib = load_paths(&[dir.join("small_library.toml")]).expect("small library loads");
    let json: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("products.json")).unwrap()).unwrap();
    (lib, json)
}

/// (admitted tuples, distinct canonical SMILES) for a parameter set.
fn enumerate(lib: &Library, params: &EnumerateParams) -> (usize, BTreeSet<String>) {
    let en = Enumerator::new(lib, params).unwrap();
    let mut admitted = 0;
    let mut set = BTreeSet::new();
    en.for_each(|e| {
        if let TupleEvent::Admitted(t) = e {
            admitted += 1;
            set.insert(canonical_smiles(&assemble(lib, &t).mol));
        }
        ControlFlow::Continue(())
    });
    (admitted, set)
}

fn ours_of_rdkit(json: &Value, key: &str) -> BTreeSet<String> {
    json["architectures"][key]["smiles"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| canonical_smiles(&parse_smiles(s.as_str().unwrap()).unwrap()))
        .collect()
}

fn params(arch: Architecture) -> EnumerateParams {
    EnumerateParams {
        architectures: vec![arch],
        max_mol_weight: 1.0e6,
        max_heavy_atoms: 100_000,
        dn_a_min: 2,
        dn_a_max: 5,
        ..EnumerateParams::default()
    }
}

#[test]
fn products_equal_rdkit_for_every_architecture() {
    let (lib, json) = fixture();
    let cases = [
        (Architecture::DA, "D-A", None),
        (Architecture::DBA, "D-B-A", None),
        (Architecture::DAD, "D-A-D", None),
        (Architecture::ADA, "A-D-A", None),
        (Architecture::DBABD, "D-B-A-B-D", None),
        (Architecture::DnA, "Dn-A-alike", Some(DnAMode::Alike)),
        (Architecture::DnA, "Dn-A-mixed", Some(DnAMode::Mixed)),
    ];
    for (arch, key, mode) in cases {
        let mut p = params(arch);
        if let Some(m) = mode {
            p.dn_a_mode = m;
        }
        if mode == Some(DnAMode::Mixed) {
            p.donors = RoleFilter {
                include: json["mixed_donors"]
                    .as_array()
                    .unwrap()
                    .iter()
                    .map(|v| v.as_str().unwrap().to_string())
                    .collect(),
                exclude: vec![],
            };
        }
        let (admitted, ours) = enumerate(&lib, &p);
        let theirs = ours_of_rdkit(&json, key);
        assert_eq!(
            theirs.len() as u64,
            json["architectures"][key]["count"].as_u64().unwrap(),
            "{key}: RDKit strings that we read as one molecule"
        );
        let missing: Vec<_> = theirs.difference(&ours).collect();
        let extra: Vec<_> = ours.difference(&theirs).collect();
        assert!(
            missing.is_empty() && extra.is_empty(),
            "{key}: missing {missing:?}, extra {extra:?}"
        );
        // Symmetry reduction is exact on this library: one admitted tuple per molecule.
        assert_eq!(admitted, ours.len(), "{key}: tuples vs distinct molecules");
    }
}

fn count_on_core(
    lib: &Library,
    arch: Architecture,
    core: &str,
    donors: &[&str],
    mode: DnAMode,
    n: usize,
) -> usize {
    let mut p = params(arch);
    p.acceptors = RoleFilter {
        include: vec![core.to_string()],
        exclude: vec![],
    };
    p.donors = RoleFilter {
        include: donors.iter().map(|s| s.to_string()).collect(),
        exclude: vec![],
    };
    p.dn_a_mode = mode;
    p.dn_a_min = n;
    p.dn_a_max = n;
    enumerate(lib, &p).1.len()
}

#[test]
fn counts_follow_the_burnside_formulas() {
    let (lib, _) = fixture();
    let donors: Vec<&str> = lib
        .fragments
        .iter()
        .filter(|f| f.role == lumisift::model::Role::Donor && f.site_count() == 1)
        .map(|f| f.id.as_str())
        .collect();
    for m in 1..=donors.len() {
        let d = &donors[..m];
        let mu = m;
        // Two-site cores.
        assert_eq!(
            count_on_core(
                &lib,
                Architecture::DAD,
                "diphenylsulfone-4-4-diyl",
                d,
                DnAMode::Mixed,
                2
            ),
            mu * (mu + 1) / 2,
            "symmetric two-site core, m = {m}"
        );
        assert_eq!(
            count_on_core(
                &lib,
                Architecture::DAD,
                "benzonitrile-2-4-diyl",
                d,
                DnAMode::Mixed,
                2
            ),
            mu * mu,
            "asymmetric two-site core, m = {m}"
        );
        // Three equivalent sites, all filled: multisets of size 3.
        assert_eq!(
            count_on_core(
                &lib,
                Architecture::DnA,
                "1-3-5-triazine-2-4-6-triyl",
                d,
                DnAMode::Mixed,
                3
            ),
            mu * (mu + 1) * (mu + 2) / 6,
            "triazine-triyl, m = {m}"
        );
        // Isophthalonitrile tetrayl, all four filled: (m^4 + m^3) / 2.
        if m <= 3 {
            assert_eq!(
                count_on_core(
                    &lib,
                    Architecture::DnA,
                    "isophthalonitrile-2-4-5-6-tetrayl",
                    d,
                    DnAMode::Mixed,
                    4
                ),
                (mu.pow(4) + mu.pow(3)) / 2,
                "isophthalonitrile-tetrayl, m = {m}"
            );
        }
    }
}

#[test]
fn site_symmetry_is_found_exactly() {
    let (lib, _) = fixture();
    let order = |id: &str| lib.get(id).unwrap().site_symmetry.len();
    assert_eq!(order("diphenylsulfone-4-4-diyl"), 2);
    assert_eq!(order("benzonitrile-2-4-diyl"), 1);
    assert_eq!(order("1-3-5-triazine-2-4-6-triyl"), 6, "S3 on three sites");
    assert_eq!(order("isophthalonitrile-2-4-5-6-tetrayl"), 2, "one mirror");
    assert!(lib.get("1-4-phenylene").unwrap().sites_swappable());
    assert!(!lib.get("pyridine-2-5-diyl").unwrap().sites_swappable());
}

#[test]
fn constraints_reject_before_building_and_are_counted() {
    let (lib, _) = fixture();
    let mut p = params(Architecture::DAD);
    p.max_mol_weight = 600.0;
    p.forbidden_pairs = vec![(
        "carbazol-9-yl".to_string(),
        "benzonitrile-2-4-diyl".to_string(),
    )];
    let en = Enumerator::new(&lib, &p).unwrap();
    let mut counts = lumisift::combine::Counts::default();
    en.for_each(|e| {
        if let TupleEvent::Admitted(t) = &e {
            let mw = t.mol_weight(&lib);
            let cand = assemble(&lib, t);
            let exact = lumisift::chem::props::average_mass(&cand.mol).unwrap();
            assert!(
                (mw - exact).abs() < 1e-6,
                "tuple-level MW {mw} vs graph {exact}"
            );
            assert!(mw <= 600.0);
            assert!(
                !t.fragment_indices()
                    .iter()
                    .any(|&i| lib.fragments[i].id == "benzonitrile-2-4-diyl")
                    || !t
                        .fragment_indices()
                        .iter()
                        .any(|&i| lib.fragments[i].id == "carbazol-9-yl")
            );
        }
        counts.record(&e);
        ControlFlow::Continue(())
    });
    assert!(counts.rejected_mol_weight > 0);
    assert!(counts.rejected_forbidden_pair > 0);
    assert_eq!(
        counts.generated,
        counts.admitted
            + counts.symmetry_equivalent
            + counts.rejected_mol_weight
            + counts.rejected_forbidden_pair
            + counts.rejected_heavy_atoms
            + counts.rejected_pair_not_allowed
    );
}

#[test]
fn assembled_candidates_know_their_units_and_twistable_links() {
    let (lib, _) = fixture();
    let p = params(Architecture::DBA);
    let en = Enumerator::new(&lib, &p).unwrap();
    let mut seen = 0;
    en.for_each(|e| {
        if let TupleEvent::Admitted(t) = e {
            let c = assemble(&lib, &t);
            assert_eq!(c.units.len(), 3);
            assert_eq!(c.links.len(), 2);
            assert!(c.links.iter().all(|l| l.twistable));
            assert_eq!(c.atom_unit.len(), c.mol.atom_count());
            // Every link joins atoms of the two units it names.
            for l in &c.links {
                let (a, b) = c.mol.graph.edge_endpoints(l.bond).unwrap();
                let (ua, ub) = (c.atom_unit[a.index()], c.atom_unit[b.index()]);
                assert!((ua, ub) == l.units || (ub, ua) == l.units);
            }
            // No attachment dummies remain.
            assert!(c.mol.graph.node_weights().all(|a| !a.is_dummy()));
            seen += 1;
        }
        ControlFlow::Continue(())
    });
    assert!(seen > 10);
}
