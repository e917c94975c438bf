//! Steric repulsion between the two sides of a rotatable bond: the repulsive (exponential) part
//! of the MM3 Buckingham van der Waals term, E = ε·1.84·10⁵·exp(−12.0 r / r*), with r* the sum of
//! the two atoms' van der Waals radii and ε their geometric-mean well depth (Allinger, Yuh & Lii,
//! J. Am. Chem. Soc. 111, 8551 (1989); radii and depths below quoted from memory of the MM3
//! parameter table). Energies in kJ/mol (1 kcal = 4.184 kJ). Pairs closer than three bonds are
//! skipped: their distance does not change on rotation.

use crate::chem::{AtomIdx, Molecule};

use super::{Coordinates, dist};

/// MM3 van der Waals radius (Å) and well depth (kcal/mol) by element (from memory; elements not
/// listed use carbon's values).
fn vdw(z: u8) -> (f64, f64) {
    match z {
        1 => (1.62, 0.020),
        5 => (2.15, 0.014),
        6 => (2.04, 0.027),
        7 => (1.93, 0.043),
        8 => (1.82, 0.059),
        9 => (1.71, 0.075),
        14 => (2.29, 0.140),
        15 => (2.22, 0.168),
        16 => (2.15, 0.202),
        17 => (2.07, 0.240),
        34 => (2.30, 0.280),
        35 => (2.22, 0.320),
        _ => (2.04, 0.027),
    }
}

/// Topological distance (bonds) from each atom to `start`, up to `max`.
fn bond_distance(mol: &Molecule, start: usize, max: usize) -> Vec<usize> {
    let mut d = vec![usize::MAX; mol.atom_count()];
    d[start] = 0;
    let mut frontier = vec![start];
    for k in 1..=max {
        let mut next = Vec::new();
        for &x in &frontier {
            for (y, _) in mol.neighbours(AtomIdx::new(x)) {
                if d[y.index()] == usize::MAX {
                    d[y.index()] = k;
                    next.push(y.index());
                }
            }
        }
        frontier = next;
    }
    d
}

/// Repulsion (kJ/mol) between atoms with `side[i]` true and atoms with it false, for a molecule
/// with explicit hydrogens. O(n_side · n_other).
pub fn side_repulsion(mol: &Molecule, coords: &Coordinates, side: &[bool]) -> f64 {
    let n = mol.atom_count();
    let mut e = 0.0;
    for i in 0..n {
        if !side[i] {
            continue;
        }
        let near = bond_distance(mol, i, 2);
        let (ri, ei) = vdw(mol.atom(AtomIdx::new(i)).element);
        for j in 0..n {
            if side[j] || near[j] <= 2 {
                continue;
            }
            let (rj, ej) = vdw(mol.atom(AtomIdx::new(j)).element);
            let r = dist(coords.points[i], coords.points[j]);
            let rstar = ri + rj;
            let eps = (ei * ej).sqrt();
            e += eps * 1.84e5 * (-12.0 * r / rstar).exp();
        }
    }
    e * 4.184
}

/// Minimum distances (Å) of the clash check: non-bonded heavy atoms, and hydrogen pairs.
pub const CLASH_HEAVY_MIN: f64 = 2.5;
pub const CLASH_HH_MIN: f64 = 1.7;
/// Heavy atoms exactly three bonds apart (1–4): their distance is set by two bond angles and a
/// dihedral, and an eclipsed C–C–C–C with ideal angles is already about 2.5 Å; regular-polygon
/// rings around sp3 centres (120° instead of ~111°) shave a little off. Limit 2.4 Å.
pub const CLASH_HEAVY_14_MIN: f64 = 2.4;

/// Pairs of atoms more than two bonds apart that are closer than [`CLASH_HEAVY_MIN`] (two
/// non-hydrogen atoms; [`CLASH_HEAVY_14_MIN`] for 1–4 pairs) or [`CLASH_HH_MIN`] (two
/// hydrogens), as (i, j, distance), i < j; for a
/// molecule with explicit hydrogens. Heavy–hydrogen pairs are not checked (a rule of thumb of
/// the trade for rigid-rotor geometries: the limits of the issue that asked for this check).
pub fn clashes(mol: &Molecule, coords: &Coordinates) -> Vec<(usize, usize, f64)> {
    let n = mol.atom_count();
    let mut out = Vec::new();
    for i in 0..n {
        let zi = mol.atom(AtomIdx::new(i)).element;
        let near = bond_distance(mol, i, 3);
        for j in i + 1..n {
            if near[j] <= 2 {
                continue;
            }
            let zj = mol.atom(AtomIdx::new(j)).element;
            let limit = match (zi == 1, zj == 1) {
                (false, false) if near[j] == 3 => CLASH_HEAVY_14_MIN,
                (false, false) => CLASH_HEAVY_MIN,
                (true, true) => CLASH_HH_MIN,
                _ => continue,
            };
            let r = dist(coords.points[i], coords.points[j]);
            if r < limit {
                out.push((i, j, r));
            }
        }
    }
    out
}
