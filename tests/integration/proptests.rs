//! Property tests: the canonical string does not depend on atom order or spelling, and the
//! round trip parse(write(m)) is the same molecule.
//!
//! Two sources of molecules: the RDKit fixture (real donor–acceptor structures) written out in
//! random atom orders by our own writer, and small random molecules built from a grammar of
//! chains, branches, rings and heteroatoms.

use lumisift::chem::canon::{Ranking, canonical_ranks};
use lumisift::chem::smiles::write::write_smiles;
use lumisift::chem::{Molecule, canonical_smiles, parse_smiles};
use proptest::prelude::*;
use proptest::test_runner::Config;

fn fixture_smiles() -> Vec<String> {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/rdkit_molecules.jsonl"
    ))
    .expect("fixture present");
    text.lines()
        .map(|l| {
            let v: serde_json::Value = serde_json::from_str(l).unwrap();
            v["rdkit_canonical"].as_str().unwrap().to_string()
        })
        .collect()
}

/// Write `mol` in the atom order given by `perm` (a permutation of 0..n used as ranks).
fn write_in_order(mol: &Molecule, perm: &[u32]) -> String {
    let canon = canonical_ranks(mol);
    let ranking = Ranking {
        ranks: perm.to_vec(),
        classes: canon.classes,
    };
    write_smiles(mol, &ranking)
}

fn shuffled(n: usize, seed: u64) -> Vec<u32> {
    // Fisher–Yates with a SplitMix64 stream (deterministic per seed).
    let mut s = seed;
    let mut next = move || {
        s = s.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = s;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    };
    let mut p: Vec<u32> = (0..n as u32).collect();
    for i in (1..n).rev() {
        let j = (next() % (i as u64 + 1)) as usize;
        p.swap(i, j);
    }
    p
}

proptest! {
    #![proptest_config(Config { cases: 300, ..Config::default() })]

    #[test]
    fn fixture_molecules_in_random_atom_order(idx in 0usize..720, seed in any::<u64>()) {
        let all = fixture_smiles();
        let smi = &all[idx % all.len()];
        let mol = parse_smiles(smi).unwrap();
        let canon = canonical_smiles(&mol);
        let perm = shuffled(mol.atom_count(), seed);
        let random_order = write_in_order(&mol, &perm);
        let back = parse_smiles(&random_order)
            .unwrap_or_else(|e| panic!("{random_order}: {e}"));
        prop_assert_eq!(back.atom_count(), mol.atom_count());
        prop_assert_eq!(back.bond_count(), mol.bond_count());
        prop_assert_eq!(canonical_smiles(&back), canon);
    }
}

/// A small grammar of organic molecules: a chain of units, some closed into rings, with
/// branches and heteroatoms. Every generated string is valid by construction.
fn molecule_strategy() -> impl Strategy<Value = String> {
    let unit = prop_oneof![
        Just("C"),
        Just("N"),
        Just("O"),
        Just("S"),
        Just("c1ccccc1"),
        Just("c1ccncc1"),
        Just("c1ccsc1"),
        Just("c1cc[nH]c1"),
        Just("C(=O)"),
        Just("C(F)(F)"),
        Just("C#N"),
        Just("C[N+](C)(C)C"),
        Just("C(C)(C)"),
        Just("c1ccc2c(c1)[nH]c1ccccc12"),
        Just("c1ccc2ccccc2c1"),
        Just("[2H]"),
        Just("C=C"),
        Just("C[Si](C)(C)C"),
        Just("B(c1ccccc1)"),
        Just("Cl"),
    ];
    prop::collection::vec(unit, 1..7).prop_map(|units| {
        // Join units linearly; a unit whose string ends a ring is joined at its first atom.
        let mut s = String::new();
        for (i, u) in units.iter().enumerate() {
            if i > 0 {
                s.push('.');
            }
            s.push_str(u);
        }
        s
    })
}

/// Join the dot-separated units of `s` into one molecule by replacing each `.` by a bond, when
/// valences allow; the result is re-checked by the parser (invalid joins are skipped).
fn join_units(s: &str) -> Option<String> {
    let joined = s.replace('.', "");
    parse_smiles(&joined).ok().map(|_| joined)
}

proptest! {
    #![proptest_config(Config { cases: 300, ..Config::default() })]

    #[test]
    fn random_molecules_canonical_and_round_trip(s in molecule_strategy(), seed in any::<u64>()) {
        let candidates = [Some(s.clone()), join_units(&s)];
        for smi in candidates.into_iter().flatten() {
            let Ok(mol) = parse_smiles(&smi) else { continue };
            let canon = canonical_smiles(&mol);
            let back = parse_smiles(&canon).unwrap_or_else(|e| panic!("{smi} -> {canon}: {e}"));
            prop_assert_eq!(&canonical_smiles(&back), &canon);
            let perm = shuffled(mol.atom_count(), seed);
            let other = write_in_order(&mol, &perm);
            let again = parse_smiles(&other).unwrap_or_else(|e| panic!("{other}: {e}"));
            prop_assert_eq!(canonical_smiles(&again), canon);
        }
    }
}

#[test]
fn the_random_molecule_grammar_mostly_yields_valid_molecules() {
    // Guards the property test above against becoming vacuous (all inputs skipped).
    use proptest::strategy::ValueTree;
    let mut runner = proptest::test_runner::TestRunner::deterministic();
    let strat = molecule_strategy();
    let mut ok = 0;
    let mut joined_ok = 0;
    for _ in 0..200 {
        let s = strat.new_tree(&mut runner).unwrap().current();
        ok += parse_smiles(&s).is_ok() as u32;
        joined_ok += join_units(&s).is_some() as u32;
    }
    assert_eq!(
        ok, 200,
        "every dot-separated sample is valid by construction"
    );
    assert!(
        joined_ok >= 60,
        "only {joined_ok}/200 joined molecules valid"
    );
}
