//! Checks against RDKit: `tests/fixtures/rdkit_molecules.jsonl`, made by
//! `tests/fixtures/make_rdkit_fixture.py` with RDKit 2026.09.1 (see the `.meta.json` beside it).
//! 720 donor–acceptor-type molecules, each with 5 randomised SMILES (and 3 randomised Kekulé
//! SMILES for half of them).

use std::collections::BTreeMap;

use lumisift::chem::{canonical_smiles, facts, parse_smiles};
use serde_json::Value;

fn records() -> Vec<Value> {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/rdkit_molecules.jsonl"
    ))
    .expect("fixture present");
    text.lines()
        .map(|l| serde_json::from_str(l).expect("valid JSON"))
        .collect()
}

fn all_spellings(r: &Value) -> Vec<String> {
    let mut v = vec![r["rdkit_canonical"].as_str().unwrap().to_string()];
    for key in ["randomised", "randomised_kekule"] {
        if let Some(a) = r[key].as_array() {
            v.extend(a.iter().map(|s| s.as_str().unwrap().to_string()));
        }
    }
    v
}

/// Element counts from a Hill formula such as `C28H22N2O2` or `C20H19N2O2+`.
fn formula_counts(f: &str) -> BTreeMap<String, u32> {
    let mut out = BTreeMap::new();
    let b = f.as_bytes();
    let mut i = 0;
    while i < b.len() {
        if b[i].is_ascii_uppercase() {
            let mut j = i + 1;
            while j < b.len() && b[j].is_ascii_lowercase() {
                j += 1;
            }
            let sym = f[i..j].to_string();
            let mut k = j;
            while k < b.len() && b[k].is_ascii_digit() {
                k += 1;
            }
            let n = if k > j { f[j..k].parse().unwrap() } else { 1 };
            *out.entry(sym).or_insert(0) += n;
            i = k;
        } else {
            break; // charge suffix
        }
    }
    out
}

/// RDKit 2026.09.1's atomic weights (`Chem.GetPeriodicTable().GetAtomicWeight`) minus the IUPAC
/// 2021 abridged values we use. RDKit's table is older for these elements; every other element
/// in the fixture agrees exactly.
fn rdkit_minus_iupac(sym: &str) -> f64 {
    match sym {
        "B" => 10.812 - 10.81,
        "Si" => 28.086 - 28.085,
        "S" => 32.067 - 32.06,
        "Cl" => 35.453 - 35.45,
        "Se" => 78.96 - 78.971,
        "I" => 126.904 - 126.90,
        _ => 0.0,
    }
}

#[test]
fn randomised_smiles_give_one_canonical_string() {
    let recs = records();
    assert!(recs.len() >= 500, "fixture has {} molecules", recs.len());
    let mut failures = Vec::new();
    for r in &recs {
        let id = r["id"].as_str().unwrap();
        let spellings = all_spellings(r);
        let canon: Vec<String> = spellings
            .iter()
            .map(|s| match parse_smiles(s) {
                Ok(m) => canonical_smiles(&m),
                Err(e) => format!("ERROR {e}"),
            })
            .collect();
        if canon.iter().any(|c| c != &canon[0]) {
            failures.push(format!("{id}: {spellings:?} -> {canon:?}"));
        }
    }
    assert!(
        failures.is_empty(),
        "{} molecules not unique:\n{}",
        failures.len(),
        failures[..failures.len().min(5)].join("\n")
    );
}

#[test]
fn canonical_string_round_trips() {
    for r in records() {
        let m = parse_smiles(r["rdkit_canonical"].as_str().unwrap()).unwrap();
        let c = canonical_smiles(&m);
        let m2 = parse_smiles(&c).unwrap_or_else(|e| panic!("{c}: {e}"));
        assert_eq!(canonical_smiles(&m2), c);
        assert_eq!(m2.atom_count(), m.atom_count());
        assert_eq!(m2.bond_count(), m.bond_count());
    }
}

#[test]
fn formula_masses_and_counts_match_rdkit() {
    let mut max_dev: f64 = 0.0;
    let mut max_raw: f64 = 0.0;
    for r in records() {
        let id = r["id"].as_str().unwrap();
        let m = parse_smiles(r["rdkit_canonical"].as_str().unwrap()).unwrap();
        let f = facts(&m).unwrap();
        let rd_formula = r["formula"].as_str().unwrap();
        assert_eq!(f.formula, rd_formula, "{id}");
        let rd_mw = r["avg_mw"].as_f64().unwrap();
        let correction: f64 = formula_counts(rd_formula)
            .iter()
            .map(|(s, &n)| n as f64 * rdkit_minus_iupac(s))
            .sum();
        let dev = (f.mol_weight - (rd_mw - correction)).abs();
        max_dev = max_dev.max(dev);
        max_raw = max_raw.max((f.mol_weight - rd_mw).abs());
        assert!(
            dev < 0.01,
            "{id}: ours {} rdkit {rd_mw} (corr {correction})",
            f.mol_weight
        );
        // RDKit prints the exact mass to 6 decimals; its isotope masses are rounded to ~1e-7 u.
        let rd_exact = r["exact_mass"].as_f64().unwrap();
        assert!(
            (f.monoisotopic_mass - rd_exact).abs() < 2e-5,
            "{id}: monoisotopic {} vs {rd_exact}",
            f.monoisotopic_mass
        );
        assert_eq!(
            f.heavy_atoms as u64,
            r["heavy_atoms"].as_u64().unwrap(),
            "{id}"
        );
        assert_eq!(f.rings as u64, r["num_rings"].as_u64().unwrap(), "{id}");
    }
    eprintln!("max |MW − RDKit| raw {max_raw:.4}, after weight-table correction {max_dev:.5}");
}

#[test]
fn aromatic_atom_counts_agree_with_rdkit_outside_documented_differences() {
    // Our model differs from RDKit's on purpose in two places (see chem::aromaticity): rings with
    // a three-coordinate boron (0 π electrons here), and fused systems aromatic only as a whole,
    // such as the 14-π tri-s-triazine (heptazine) core. Everywhere else the counts must agree.
    let mut disagree = Vec::new();
    let mut compared = 0;
    for r in records() {
        let smi = r["rdkit_canonical"].as_str().unwrap();
        let m = parse_smiles(smi).unwrap();
        let ours = lumisift::chem::props::aromatic_atom_count(&m) as u64;
        let theirs = r["aromatic_atoms"].as_u64().unwrap();
        let frags = r["fragments"].to_string();
        if smi.contains('B') || smi.contains('b') || frags.contains("tri-s-triazin") {
            continue;
        }
        compared += 1;
        if ours != theirs {
            disagree.push(format!("{smi}: ours {ours}, RDKit {theirs}"));
        }
    }
    assert!(compared > 500);
    assert!(disagree.is_empty(), "{}", disagree.join("\n"));
}
