//! Worked handbook values for emitter building blocks, computed by hand (not taken from the code
//! under test): formula, average molecular weight, monoisotopic mass, heavy atoms, rings,
//! aromatic atoms and rotatable bonds; plus spelling independence of the canonical SMILES and the
//! candidate identity.
//!
//! Average molecular weights: IUPAC/CIAAW 2021 abridged standard atomic weights
//! (Prohaska et al., Pure Appl. Chem. 94, 573 (2022)):
//!   H 1.008, B 10.81, C 12.011, N 14.007, O 15.999, S 32.06.
//! Monoisotopic masses: AME2020 atomic masses (Wang et al., Chin. Phys. C 45, 030003 (2021)):
//!   ¹H 1.00782503223, ¹¹B 11.00930536, ¹²C 12 (exact), ¹⁴N 14.00307400443,
//!   ¹⁶O 15.99491461957, ³²S 31.9720711744.
//! Multiples used below: 1H ×5 5.03912516115, ×6 6.04695019338, ×8 8.06260025784,
//!   ×9 9.07042529007, ×10 10.0782503223, ×15 15.11737548345; 14N ×3 42.00922201329;
//!   16O ×2 31.98982923914.
//!
//! Rotatable bonds follow the definition documented in `props::rotatable_bond_count`: a single,
//! non-ring bond between two atoms that each have at least two heavy neighbours, neither in a
//! triple bond, and not a secondary-amide C–N.
//!
//! Aromatic atoms follow the Hückel model documented in `chem::aromaticity` (π electrons per atom:
//! 1 for an atom with a ring double bond, 2 for a lone-pair N/O/S, 0 for a C=O carbon or a
//! three-coordinate B; a ring with 4n+2 electrons is aromatic).

use lumisift::chem::{
    CANONICALISER_VERSION, MolFacts, candidate_id, canonical_smiles, facts, parse_smiles,
};

struct Handbook {
    name: &'static str,
    formula: &'static str,
    mol_weight: f64,
    monoisotopic: f64,
    heavy_atoms: usize,
    rings: usize,
    aromatic_atoms: usize,
    rotatable_bonds: usize,
    /// Different spellings of the same molecule: Kekulé, aromatic, other atom orders, explicit
    /// hydrogens, `%nn` ring closures. The first is the reference spelling.
    spellings: &'static [&'static str],
}

const MOLECULES: &[Handbook] = &[
    Handbook {
        name: "benzene",
        formula: "C6H6",
        // 6×12.011 + 6×1.008 = 72.066 + 6.048 = 78.114
        mol_weight: 78.114,
        // 6×12 + 6×1.00782503223 = 72 + 6.04695019338 = 78.04695019338
        monoisotopic: 78.046_950_193_38,
        heavy_atoms: 6,
        rings: 1,
        aromatic_atoms: 6,
        rotatable_bonds: 0,
        spellings: &[
            "c1ccccc1",
            "C1=CC=CC=C1",
            "C1C=CC=CC=1",
            "C=1C=CC=CC=1",
            "c%10ccccc%10",
            "C%99=CC=CC=C%99",
            "[cH]1[cH][cH][cH][cH][cH]1",
            "[H]c1c([H])c([H])c([H])c([H])c1[H]",
            "[H]C1=C([H])C([H])=C([H])C([H])=C1[H]",
        ],
    },
    Handbook {
        name: "pyridine",
        formula: "C5H5N",
        // 5×12.011 + 5×1.008 + 14.007 = 60.055 + 5.040 + 14.007 = 79.102
        mol_weight: 79.102,
        // 60 + 5.03912516115 + 14.00307400443 = 79.04219916558
        monoisotopic: 79.042_199_165_58,
        heavy_atoms: 6,
        rings: 1,
        aromatic_atoms: 6,
        rotatable_bonds: 0,
        spellings: &[
            "c1ccncc1",
            "n1ccccc1",
            "C1=CC=NC=C1",
            "N1=CC=CC=C1",
            "c%10ccncc%10",
            "[H]c1nc([H])c([H])c([H])c1[H]",
        ],
    },
    Handbook {
        name: "thiophene",
        formula: "C4H4S",
        // 4×12.011 + 4×1.008 + 32.06 = 48.044 + 4.032 + 32.06 = 84.136
        mol_weight: 84.136,
        // 48 + 4×1.00782503223 + 31.9720711744 = 48 + 4.03130012892 + 31.9720711744
        //   = 84.00337130332
        monoisotopic: 84.003_371_303_32,
        heavy_atoms: 5,
        rings: 1,
        aromatic_atoms: 5, // 4 C (1 π e each) + S lone pair (2): 6 π electrons
        rotatable_bonds: 0,
        spellings: &[
            "c1ccsc1",
            "s1cccc1",
            "C1=CSC=C1",
            "C1=CC=CS1",
            "c%99ccsc%99",
            "[H]c1sc([H])c([H])c1[H]",
        ],
    },
    Handbook {
        name: "carbazole",
        formula: "C12H9N",
        // 12×12.011 + 9×1.008 + 14.007 = 144.132 + 9.072 + 14.007 = 167.211
        mol_weight: 167.211,
        // 144 + 9.07042529007 + 14.00307400443 = 167.0734992945
        monoisotopic: 167.073_499_294_5,
        heavy_atoms: 13,
        rings: 3,
        aromatic_atoms: 13, // pyrrole ring: N–H lone pair (2) + 4 C (4) = 6 π electrons
        rotatable_bonds: 0,
        spellings: &[
            "c1ccc2c(c1)[nH]c1ccccc12",
            "C1=CC=C2C(=C1)NC1=CC=CC=C12",
            "[nH]1c2ccccc2c2ccccc12",
            "c1cc2c3ccccc3[nH]c2cc1",
            "[H]n1c2ccccc2c2ccccc12",
            "c%10ccc%11c(c%10)[nH]c%10ccccc%10%11",
        ],
    },
    Handbook {
        name: "triphenylamine",
        formula: "C18H15N",
        // 18×12.011 + 15×1.008 + 14.007 = 216.198 + 15.120 + 14.007 = 245.325
        mol_weight: 245.325,
        // 216 + 15.11737548345 + 14.00307400443 = 245.12044948788
        monoisotopic: 245.120_449_487_88,
        heavy_atoms: 19,
        rings: 3,
        aromatic_atoms: 18, // the acyclic N is not aromatic
        rotatable_bonds: 3, // the three N–C(ipso) bonds (N: 3 heavy neighbours, ipso C: 3)
        spellings: &[
            "c1ccc(cc1)N(c1ccccc1)c1ccccc1",
            "N(c1ccccc1)(c1ccccc1)c1ccccc1",
            "C1=CC=C(C=C1)N(C1=CC=CC=C1)C1=CC=CC=C1",
            "c%10ccc(cc%10)N(c%11ccccc%11)c%12ccccc%12",
            "[H]c1c([H])c([H])c(N(c2ccccc2)c2ccccc2)c([H])c1[H]",
        ],
    },
    Handbook {
        name: "anthracene",
        formula: "C14H10",
        // 14×12.011 + 10×1.008 = 168.154 + 10.080 = 178.234
        mol_weight: 178.234,
        // 168 + 10.0782503223 = 178.0782503223
        monoisotopic: 178.078_250_322_3,
        heavy_atoms: 14,
        rings: 3,
        aromatic_atoms: 14,
        rotatable_bonds: 0,
        spellings: &[
            "c1ccc2cc3ccccc3cc2c1",
            "C1=CC=C2C=C3C=CC=CC3=CC2=C1",
            "c1cc2cc3ccccc3cc2cc1",
            "c%10ccc%11cc%12ccccc%12cc%11c%10",
        ],
    },
    Handbook {
        name: "1,3,5-triazine",
        formula: "C3H3N3",
        // 3×12.011 + 3×1.008 + 3×14.007 = 36.033 + 3.024 + 42.021 = 81.078
        mol_weight: 81.078,
        // 36 + 3.02347509669 + 42.00922201329 = 81.03269710998
        monoisotopic: 81.032_697_109_98,
        heavy_atoms: 6,
        rings: 1,
        aromatic_atoms: 6,
        rotatable_bonds: 0,
        spellings: &[
            "c1ncncn1",
            "n1cncnc1",
            "C1=NC=NC=N1",
            "N1=CN=CN=C1",
            "[H]c1nc([H])nc([H])n1",
        ],
    },
    Handbook {
        name: "acridone (acridin-9(10H)-one)",
        formula: "C13H9NO",
        // 13×12.011 + 9×1.008 + 14.007 + 15.999 = 156.143 + 9.072 + 14.007 + 15.999 = 195.221
        mol_weight: 195.221,
        // 156 + 9.07042529007 + 14.00307400443 + 15.99491461957 = 195.06841391407
        monoisotopic: 195.068_413_914_07,
        heavy_atoms: 15,
        rings: 3,
        // Central ring: C=O carbon 0 + N–H lone pair 2 + four fused C 1 each = 6 π electrons,
        // so all 14 ring atoms are aromatic; the exocyclic O is not.
        aromatic_atoms: 14,
        rotatable_bonds: 0,
        spellings: &[
            "O=c1c2ccccc2[nH]c2ccccc12",
            "O=C1c2ccccc2Nc2ccccc21",
            "O=C1C2=CC=CC=C2NC2=CC=CC=C12",
            "N1c2ccccc2C(=O)c2ccccc12",
            "[H]N1c2ccccc2C(=O)c2ccccc12",
            "O=c%10c%11ccccc%11[nH]c%11ccccc%10%11",
        ],
    },
    Handbook {
        name: "xanthone (9H-xanthen-9-one)",
        formula: "C13H8O2",
        // 13×12.011 + 8×1.008 + 2×15.999 = 156.143 + 8.064 + 31.998 = 196.205
        mol_weight: 196.205,
        // 156 + 8.06260025784 + 31.98982923914 = 196.05242949698
        monoisotopic: 196.052_429_496_98,
        heavy_atoms: 15,
        rings: 3,
        // Central ring: C=O carbon 0 + ring O lone pair 2 + four fused C = 6 π electrons.
        aromatic_atoms: 14,
        rotatable_bonds: 0,
        spellings: &[
            "O=c1c2ccccc2oc2ccccc12",
            "O=C1c2ccccc2Oc2ccccc21",
            "O=C1C2=CC=CC=C2OC2=CC=CC=C12",
            "c1ccc2c(c1)oc1ccccc1c2=O",
        ],
    },
    Handbook {
        name: "phenoxazine (10H-phenoxazine)",
        formula: "C12H9NO",
        // 12×12.011 + 9×1.008 + 14.007 + 15.999 = 144.132 + 9.072 + 14.007 + 15.999 = 183.210
        mol_weight: 183.21,
        // 144 + 9.07042529007 + 14.00307400443 + 15.99491461957 = 183.06841391407
        monoisotopic: 183.068_413_914_07,
        heavy_atoms: 14,
        rings: 3,
        // Central ring: O lone pair 2 + N–H lone pair 2 + four fused C = 8 π electrons (4n),
        // not aromatic; only the two benzene rings (12 atoms) are.
        aromatic_atoms: 12,
        rotatable_bonds: 0,
        spellings: &[
            "c1ccc2c(c1)Nc1ccccc1O2",
            "C1=CC=C2C(=C1)NC1=CC=CC=C1O2",
            "N1c2ccccc2Oc2ccccc12",
            "[H]N1c2ccccc2Oc2ccccc12",
            // Written aromatic although the central ring is not: perception decides.
            "c1ccc2c(c1)[nH]c1ccccc1o2",
        ],
    },
    Handbook {
        name: "benzonitrile",
        formula: "C7H5N",
        // 7×12.011 + 5×1.008 + 14.007 = 84.077 + 5.040 + 14.007 = 103.124
        mol_weight: 103.124,
        // 84 + 5.03912516115 + 14.00307400443 = 103.04219916558
        monoisotopic: 103.042_199_165_58,
        heavy_atoms: 8,
        rings: 1,
        aromatic_atoms: 6,
        // Ring–CN bond: the nitrile C is in a triple bond (and N has one heavy neighbour): 0.
        rotatable_bonds: 0,
        spellings: &[
            "N#Cc1ccccc1",
            "c1ccc(cc1)C#N",
            "N#CC1=CC=CC=C1",
            "C(#N)c1ccccc1",
        ],
    },
    Handbook {
        name: "diphenyl sulfone",
        formula: "C12H10O2S",
        // 12×12.011 + 10×1.008 + 2×15.999 + 32.06 = 144.132 + 10.080 + 31.998 + 32.06 = 218.270
        mol_weight: 218.27,
        // 144 + 10.0782503223 + 31.98982923914 + 31.9720711744 = 218.04015073584
        monoisotopic: 218.040_150_735_84,
        heavy_atoms: 15,
        rings: 2,
        aromatic_atoms: 12,
        rotatable_bonds: 2, // the two S–C(ipso) bonds
        spellings: &[
            "O=S(=O)(c1ccccc1)c1ccccc1",
            "c1ccc(cc1)S(=O)(=O)c1ccccc1",
            "O=S(C1=CC=CC=C1)(=O)C1=CC=CC=C1",
            "c%10ccc(cc%10)S(=O)(=O)c%11ccccc%11",
        ],
    },
    Handbook {
        name: "triphenylborane",
        formula: "C18H15B",
        // 18×12.011 + 15×1.008 + 10.81 = 216.198 + 15.120 + 10.81 = 242.128
        mol_weight: 242.128,
        // 216 + 15.11737548345 + 11.00930536 = 242.12668084345
        monoisotopic: 242.126_680_843_45,
        heavy_atoms: 19,
        rings: 3,
        aromatic_atoms: 18, // three phenyl rings; the acyclic B is not aromatic
        rotatable_bonds: 3, // the three B–C(ipso) bonds
        spellings: &[
            "c1ccc(cc1)B(c1ccccc1)c1ccccc1",
            "B(c1ccccc1)(c1ccccc1)c1ccccc1",
            "C1=CC=C(C=C1)B(C1=CC=CC=C1)C1=CC=CC=C1",
            "[B](c1ccccc1)(c1ccccc1)c1ccccc1",
        ],
    },
];

fn facts_of(smiles: &str) -> MolFacts {
    let mol = parse_smiles(smiles).unwrap_or_else(|e| panic!("{smiles:?}: {e}"));
    facts(&mol).unwrap_or_else(|e| panic!("{smiles:?}: {e}"))
}

#[test]
fn handbook_facts() {
    let mut failures = Vec::new();
    for m in MOLECULES {
        for &s in m.spellings {
            let f = facts_of(s);
            let mut bad = Vec::new();
            if f.formula != m.formula {
                bad.push(format!("formula {} (expected {})", f.formula, m.formula));
            }
            if (f.mol_weight - m.mol_weight).abs() > 1e-9 {
                bad.push(format!("MW {} (expected {})", f.mol_weight, m.mol_weight));
            }
            if (f.monoisotopic_mass - m.monoisotopic).abs() > 1e-9 {
                bad.push(format!(
                    "monoisotopic {} (expected {})",
                    f.monoisotopic_mass, m.monoisotopic
                ));
            }
            if f.heavy_atoms != m.heavy_atoms {
                bad.push(format!(
                    "heavy {} (expected {})",
                    f.heavy_atoms, m.heavy_atoms
                ));
            }
            if f.rings != m.rings {
                bad.push(format!("rings {} (expected {})", f.rings, m.rings));
            }
            if f.aromatic_atoms != m.aromatic_atoms {
                bad.push(format!(
                    "aromatic {} (expected {})",
                    f.aromatic_atoms, m.aromatic_atoms
                ));
            }
            if f.rotatable_bonds != m.rotatable_bonds {
                bad.push(format!(
                    "rotatable {} (expected {})",
                    f.rotatable_bonds, m.rotatable_bonds
                ));
            }
            if !bad.is_empty() {
                failures.push(format!("{} {s:?}: {}", m.name, bad.join("; ")));
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn spellings_give_one_canonical_smiles() {
    let mut failures = Vec::new();
    for m in MOLECULES {
        let reference = canonical_smiles(&parse_smiles(m.spellings[0]).unwrap());
        for &s in &m.spellings[1..] {
            let c = canonical_smiles(&parse_smiles(s).unwrap_or_else(|e| panic!("{s:?}: {e}")));
            if c != reference {
                failures.push(format!(
                    "{}: {s:?} -> {c:?}, reference {reference:?}",
                    m.name
                ));
            }
        }
        // The canonical string is a fixed point.
        let again = canonical_smiles(&parse_smiles(&reference).unwrap());
        if again != reference {
            failures.push(format!(
                "{}: {reference:?} re-canonicalises to {again:?}",
                m.name
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn different_molecules_have_different_canonical_smiles() {
    let mut seen = std::collections::BTreeMap::new();
    for m in MOLECULES {
        let c = canonical_smiles(&parse_smiles(m.spellings[0]).unwrap());
        if let Some(other) = seen.insert(c.clone(), m.name) {
            panic!("{} and {other} share canonical SMILES {c:?}", m.name);
        }
    }
}

fn is_candidate_id(s: &str) -> bool {
    s.len() == 32
        && s.bytes()
            .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b))
}

#[test]
fn candidate_id_format_equality_and_difference() {
    let mut ids = std::collections::BTreeMap::new();
    for m in MOLECULES {
        let first = facts_of(m.spellings[0]);
        assert!(
            is_candidate_id(&first.candidate_id),
            "{}: {:?}",
            m.name,
            first.candidate_id
        );
        assert_eq!(
            first.candidate_id,
            candidate_id(&first.canonical_smiles),
            "{}",
            m.name
        );
        for &s in m.spellings {
            assert_eq!(
                facts_of(s).candidate_id,
                first.candidate_id,
                "{} {s:?}",
                m.name
            );
        }
        if let Some(other) = ids.insert(first.candidate_id.clone(), m.name) {
            panic!(
                "{} and {other} share candidate id {}",
                m.name, first.candidate_id
            );
        }
    }
    // Different strings hash differently even when they are one edit apart.
    assert_ne!(candidate_id("c1ccccc1"), candidate_id("c1ccncc1"));
    assert_ne!(candidate_id("CC"), candidate_id("CC "));
}

/// The identity of benzene is pinned: it is stored in result files and must not drift. It
/// changes only when `CANONICALISER_VERSION` is bumped (or benzene's canonical string changes,
/// which must bump the version); then update both pins together.
#[test]
fn candidate_id_of_benzene_is_stable() {
    assert_eq!(
        CANONICALISER_VERSION, 1,
        "canonicaliser version bumped: update the pinned ids below"
    );
    let f = facts_of("C1=CC=CC=C1");
    assert_eq!(f.canonical_smiles, "c1ccccc1");
    assert_eq!(f.candidate_id, "47a59a81b5182c258735c97c5553d4ec");
    assert_eq!(candidate_id("c1ccccc1"), "47a59a81b5182c258735c97c5553d4ec");
}
