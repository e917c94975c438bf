//! Reading coordinates a user made elsewhere: an XYZ file (atom count, comment, `symbol x y z`
//! lines in Å) matched to a molecule whose heavy atoms come in the same order. Hydrogens in the
//! file are skipped (the π model places none of its own on them).

use crate::chem::Molecule;

use super::{Coordinates, Point};

/// One atom line of an XYZ file: 1-based line number, element symbol, position.
#[derive(Debug, Clone, PartialEq)]
pub struct XyzAtom {
    pub line: usize,
    pub symbol: String,
    pub position: Point,
}

/// Parse XYZ text; the error names the line and what was expected.
pub fn parse_xyz(text: &str) -> Result<Vec<XyzAtom>, String> {
    let mut lines = text.lines().enumerate();
    let (_, first) = lines
        .next()
        .ok_or("line 1: expected the atom count, found an empty file")?;
    let n: usize = first
        .trim()
        .parse()
        .map_err(|_| format!("line 1: expected the atom count, found '{}'", first.trim()))?;
    if lines.next().is_none() {
        return Err("line 2: expected a comment line, found the end of the file".into());
    }
    let mut atoms = Vec::with_capacity(n);
    for (i, l) in lines {
        if atoms.len() == n {
            break;
        }
        let f: Vec<&str> = l.split_whitespace().collect();
        if f.len() < 4 {
            return Err(format!(
                "line {}: expected 'symbol x y z', found '{}'",
                i + 1,
                l.trim()
            ));
        }
        let mut p = [0.0; 3];
        for k in 0..3 {
            p[k] = f[k + 1]
                .parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .ok_or_else(|| {
                    format!(
                        "line {}: coordinate '{}' is not a finite number",
                        i + 1,
                        f[k + 1]
                    )
                })?;
        }
        atoms.push(XyzAtom {
            line: i + 1,
            symbol: f[0].to_string(),
            position: p,
        });
    }
    if atoms.len() != n {
        return Err(format!(
            "line {}: the count line promises {n} atoms, the file has {}",
            atoms.len() + 3,
            atoms.len()
        ));
    }
    Ok(atoms)
}

/// Coordinates for `mol` from XYZ atoms whose non-hydrogen atoms are `mol`'s heavy atoms in the
/// same order (hydrogens of the file skipped, implicit or explicit hydrogens of `mol` not
/// needed). Errors name the file line of the first mismatch.
pub fn heavy_atom_coordinates(mol: &Molecule, atoms: &[XyzAtom]) -> Result<Coordinates, String> {
    let heavy: Vec<&XyzAtom> = atoms
        .iter()
        .filter(|a| !matches!(a.symbol.to_ascii_uppercase().as_str(), "H" | "D" | "T"))
        .collect();
    let ours: Vec<usize> = (0..mol.atom_count())
        .filter(|&i| mol.atom(crate::chem::AtomIdx::new(i)).element != 1)
        .collect();
    if ours.len() != mol.atom_count() {
        return Err("explicit hydrogen atoms in the SMILES are not supported with --xyz".into());
    }
    if heavy.len() != ours.len() {
        return Err(format!(
            "the file has {} heavy atoms, the SMILES {}",
            heavy.len(),
            ours.len()
        ));
    }
    let mut points = vec![[0.0; 3]; mol.atom_count()];
    for (x, &i) in heavy.iter().zip(&ours) {
        let want = mol.atom(crate::chem::AtomIdx::new(i)).symbol();
        if !x.symbol.eq_ignore_ascii_case(want) {
            return Err(format!(
                "line {}: atom {} of the SMILES is {want}, the file has {} (heavy atoms must \
                 come in SMILES order)",
                x.line,
                i + 1,
                x.symbol
            ));
        }
        points[i] = x.position;
    }
    Ok(Coordinates { points })
}
