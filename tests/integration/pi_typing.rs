//! π-system perception and the shipped parameter file. Expected site types are assigned by
//! hand from the usual valence-bond picture of each molecule (common practice of PPP work; the
//! table is in `src/pi/typing.rs`).

use std::collections::BTreeMap;

use lumisift::chem::parse_smiles;
use lumisift::pi::params::PppParams;
use lumisift::pi::typing::{PiSite, perceive, unparameterised};

/// Count of each site type.
fn types(smiles: &str) -> BTreeMap<&'static str, usize> {
    let m = parse_smiles(smiles).unwrap();
    let t = perceive(&m);
    let mut out = BTreeMap::new();
    for s in &t.sites {
        if let PiSite::Site(k) = s {
            *out.entry(*k).or_insert(0) += 1;
        }
    }
    out
}

fn map(pairs: &[(&'static str, usize)]) -> BTreeMap<&'static str, usize> {
    pairs.iter().copied().collect()
}

#[test]
fn site_types_of_common_emitter_fragments() {
    // Carbazole: 12 sp2 C and the pyrrole-type N (2 e).
    assert_eq!(
        types("c1ccc2c(c1)[nH]c1ccccc12"),
        map(&[("C", 12), ("N2", 1)])
    );
    // Acridone: carbonyl O (1 e), amine N (2 e), 13 C.
    assert_eq!(
        types("O=c1c2ccccc2[nH]c2ccccc12"),
        map(&[("C", 13), ("N2", 1), ("O1", 1)])
    );
    // Xanthone: ring O (2 e) and carbonyl O (1 e).
    assert_eq!(
        types("O=c1c2ccccc2oc2ccccc12"),
        map(&[("C", 13), ("O1", 1), ("O2", 1)])
    );
    // Benzonitrile: the nitrile is one C and one N1 site.
    assert_eq!(types("N#Cc1ccccc1"), map(&[("C", 7), ("N1", 1)]));
    // Pyridine and thiophene.
    assert_eq!(types("c1ccncc1"), map(&[("C", 5), ("N1", 1)]));
    assert_eq!(types("c1ccsc1"), map(&[("C", 4), ("S2", 1)]));
    // 9,9-Dimethylacridan: the sp3 C and its methyls are not π sites; N is.
    assert_eq!(
        types("CC1(C)c2ccccc2Nc2ccccc12"),
        map(&[("C", 12), ("N2", 1)])
    );
    // Phenoxazine and phenothiazine.
    assert_eq!(
        types("c1ccc2c(c1)Nc1ccccc1O2"),
        map(&[("C", 12), ("N2", 1), ("O2", 1)])
    );
    assert_eq!(
        types("c1ccc2c(c1)Nc1ccccc1S2"),
        map(&[("C", 12), ("N2", 1), ("S2", 1)])
    );
    // Triphenylborane: B with an empty p orbital.
    assert_eq!(
        types("B(c1ccccc1)(c1ccccc1)c1ccccc1"),
        map(&[("B", 1), ("C", 18)])
    );
    // Anisole: ether O conjugated, methyl not; trimethylamine not conjugated at all.
    assert_eq!(types("COc1ccccc1"), map(&[("C", 6), ("O2", 1)]));
    assert!(types("CN(C)C").is_empty());
    // Fluoro- and chlorobenzene.
    assert_eq!(types("Fc1ccccc1Cl"), map(&[("C", 6), ("Cl", 1), ("F", 1)]));
}

#[test]
fn sulfone_and_phosphine_oxide_are_inductive_not_pi() {
    let m = parse_smiles("O=S(=O)(c1ccccc1)c1ccccc1").unwrap();
    let t = perceive(&m);
    let n_sites = t.site_atoms().len();
    assert_eq!(n_sites, 12, "two phenyl rings; S and O excluded");
    let shifted = t.inductive.iter().filter(|i| i.sulfone).count();
    assert_eq!(shifted, 2, "the two ipso carbons");
    let m = parse_smiles("O=P(c1ccccc1)(c1ccccc1)c1ccccc1").unwrap();
    let t = perceive(&m);
    assert_eq!(t.site_atoms().len(), 18);
    assert_eq!(t.inductive.iter().filter(|i| i.phosphine_oxide).count(), 3);
}

#[test]
fn atoms_outside_the_parameter_set_are_named() {
    // A tellurophene ring and a cyclometalated platinum: not parameterised.
    let m = parse_smiles("c1cc[te]c1").unwrap();
    let t = perceive(&m);
    assert_eq!(unparameterised(&m, &t), vec![(3, "Te")]);
    let m = parse_smiles("[Pt]c1ccccc1").unwrap();
    let t = perceive(&m);
    assert_eq!(unparameterised(&m, &t), vec![(0, "Pt")]);
    // Bromine is a σ-only substituent by design: nothing reported.
    let m = parse_smiles("Brc1ccccc1").unwrap();
    assert!(unparameterised(&m, &perceive(&m)).is_empty());
}

#[test]
fn the_shipped_parameter_file_covers_every_site_type_with_a_source() {
    let p = PppParams::default_set();
    for t in [
        "C", "N1", "N2", "O1", "O2", "S1", "S2", "Se2", "P1", "P2", "B", "F", "Cl",
    ] {
        let s = p.sites.get(t).unwrap_or_else(|| panic!("site {t} missing"));
        assert!(!s.source.trim().is_empty(), "site {t} has no source");
    }
    // Every π type bonded to carbon has a β.
    for t in [
        "N1", "N2", "O1", "O2", "S1", "S2", "Se2", "P1", "P2", "B", "F", "Cl",
    ] {
        assert!(p.beta("C", t).is_some(), "C–{t}");
    }
    assert_eq!(p.beta("C", "C"), Some(-2.39));
    assert!(
        (p.beta("N2", "C").unwrap() - 0.89 * -2.39).abs() < 1e-12,
        "symmetric lookup"
    );
    assert_eq!(
        p.beta("O2", "O2"),
        None,
        "unlisted hetero pair: not parameterised"
    );
    // Bad files are refused with a line number.
    let err = PppParams::parse("name = 1\n").unwrap_err();
    assert!(err.starts_with("line 1"), "{err}");
}
