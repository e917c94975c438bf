//! Circular fingerprints and Tanimoto similarity.
//!
//! Outside reference: `tests/fixtures/rdkit_fingerprints.jsonl`, 200 molecule pairs with RDKit
//! 2026.09.1 Morgan (radius 2, 2048 bits) Tanimoto similarities (script:
//! `tests/fixtures/make_rdkit_fixture.py`). Our hashing differs from RDKit's, so bits are not
//! comparable, but the method (Rogers & Hahn 2010) is the same and the similarities must rank
//! pairs alike.

use lumisift::chem::{FingerprintParams, circular_fingerprint, parse_smiles, tanimoto};

fn fp(s: &str) -> lumisift::chem::Fingerprint {
    circular_fingerprint(&parse_smiles(s).unwrap(), FingerprintParams::default())
}

use lumisift::fast::fit::spearman;

#[test]
fn tanimoto_ranks_pairs_like_rdkit_morgan() {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/rdkit_fingerprints.jsonl"
    ))
    .unwrap();
    let mut ours = Vec::new();
    let mut theirs = Vec::new();
    for line in text.lines() {
        let v: serde_json::Value = serde_json::from_str(line).unwrap();
        let t = tanimoto(
            &fp(v["smiles_a"].as_str().unwrap()),
            &fp(v["smiles_b"].as_str().unwrap()),
        );
        ours.push(t);
        theirs.push(v["tanimoto"].as_f64().unwrap());
    }
    assert_eq!(ours.len(), 200);
    let rho = spearman(&ours, &theirs);
    let mae: f64 = ours
        .iter()
        .zip(&theirs)
        .map(|(a, b)| (a - b).abs())
        .sum::<f64>()
        / ours.len() as f64;
    eprintln!("Spearman rho vs RDKit Morgan: {rho:.3}; mean |ΔT| {mae:.3}");
    assert!(
        rho > 0.85,
        "rank correlation with RDKit Morgan only {rho:.3}"
    );
    assert!(mae < 0.1, "mean |ΔT| {mae:.3}");
}

#[test]
fn tanimoto_basic_properties() {
    let a = fp("N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21");
    let a2 = fp("c1ccc2c(c1)c1ccccc1n2-c1ccc(C#N)cc1");
    let b = fp("N#Cc1ccc(cc1)-n1c2ccccc2c2cc(C)ccc21");
    let c = fp("O=S1(=O)c2ccccc2Oc2ccccc21");
    assert_eq!(a, a2, "spelling does not change the fingerprint");
    assert_eq!(tanimoto(&a, &a), 1.0);
    assert_eq!(tanimoto(&a, &b), tanimoto(&b, &a));
    assert!(
        tanimoto(&a, &b) > tanimoto(&a, &c),
        "a methyl analogue is closer than a sulfone"
    );
    assert!(tanimoto(&a, &c) < 0.3);
    let empty = circular_fingerprint(
        &parse_smiles("[2H][2H]").unwrap(),
        FingerprintParams::default(),
    );
    assert_eq!(empty.count_ones(), 0, "no heavy atoms, no bits");
    assert_eq!(tanimoto(&empty, &empty), 1.0);
}

#[test]
fn radius_and_length_are_honoured() {
    let m = parse_smiles("CC(C)(C)c1ccc2c(c1)c1cc(ccc1n2-c1ccc(cc1)C#N)C(C)(C)C").unwrap();
    let r0 = circular_fingerprint(
        &m,
        FingerprintParams {
            radius: 0,
            n_bits: 4096,
        },
    );
    let r2 = circular_fingerprint(
        &m,
        FingerprintParams {
            radius: 2,
            n_bits: 4096,
        },
    );
    let r3 = circular_fingerprint(
        &m,
        FingerprintParams {
            radius: 3,
            n_bits: 4096,
        },
    );
    assert!(r0.count_ones() < r2.count_ones() && r2.count_ones() < r3.count_ones());
    let short = circular_fingerprint(
        &m,
        FingerprintParams {
            radius: 2,
            n_bits: 64,
        },
    );
    assert_eq!(short.n_bits(), 64);
    // Every set bit of the 4096-bit print maps onto a set bit of the 64-bit fold.
    for bit in 0..4096 {
        if r2.get(bit) {
            assert!(short.get(bit % 64));
        }
    }
}
