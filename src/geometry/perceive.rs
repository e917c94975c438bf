//! Perceiving a molecule from bare coordinates (a QC program's final geometry), to match it to
//! a candidate without trusting file names.
//!
//! Connectivity: atoms i, j are bonded when d_ij ≤ r_i + r_j + [`BOND_TOLERANCE_A`], with r the
//! single-bond covalent radii of Cordero et al., Dalton Trans. 2008, 2832 (values from memory of
//! that table; carbon takes its sp3 radius); a candidate bond closer than 45° to a shorter one
//! at the same atom is a ring diagonal and dropped. Each hydrogen is attached to its nearest bonded
//! heavy atom only. The key compares the **heavy-atom skeleton**: elements, heavy–heavy
//! connectivity and the hydrogen count on each heavy atom; bond orders, aromaticity and charges
//! are left out, because coordinates do not fix them reliably (a Kekulé structure and its
//! resonance partner give the same skeleton). Two molecules with the same skeleton but
//! different bond orders (rare among closed-shell neutral candidates with the same hydrogen
//! counts) get the same key; callers report such matches as ambiguous when several candidates
//! share a key.
//!
//! The key is the canonical SMILES of the skeleton written with single bonds only (our own
//! canonicaliser), so it is stable across atom orderings.

use crate::chem::{Atom, Bond, BondOrder, Molecule, canonical_smiles, element};

use super::Point;

/// Tolerance (Å) added to the sum of covalent radii. Common practice in structure perception
/// is 0.4–0.45 Å; 0.5 Å here because this tool's own rigid layouts of peri-fused ring systems
/// stretch a ring-closure bond to ~1.96 Å (measured on a fused indolocarbazole-type unit), and
/// a user may run a single point on exactly that geometry. Non-bonded 1,3 contacts of
/// second-row atoms (≥ 2.3 Å) stay above the C–C limit of 2.02 Å.
pub const BOND_TOLERANCE_A: f64 = 0.5;

/// Smallest angle (degrees) between two bonds of one atom: three-membered rings have 60°
/// (cyclopropane, epoxides), the diagonal of a five-membered ring sits 36° off its side.
const MIN_BOND_ANGLE_DEG: f64 = 45.0;

/// Atoms closer than this (Å) are overlapping: the geometry is broken.
const OVERLAP_A: f64 = 0.4;

/// Single-bond covalent radius (Å), Cordero et al., Dalton Trans. 2008, 2832 (from memory of
/// the table; C is sp3). `None` for elements not listed here.
pub fn covalent_radius(z: u8) -> Option<f64> {
    Some(match z {
        1 => 0.31,
        2 => 0.28,
        3 => 1.28,
        4 => 0.96,
        5 => 0.84,
        6 => 0.76,
        7 => 0.71,
        8 => 0.66,
        9 => 0.57,
        10 => 0.58,
        11 => 1.66,
        12 => 1.41,
        13 => 1.21,
        14 => 1.11,
        15 => 1.07,
        16 => 1.05,
        17 => 1.02,
        18 => 1.06,
        19 => 2.03,
        20 => 1.76,
        29 => 1.32,
        30 => 1.22,
        31 => 1.22,
        32 => 1.20,
        33 => 1.19,
        34 => 1.20,
        35 => 1.20,
        36 => 1.16,
        44 => 1.46,
        45 => 1.42,
        46 => 1.39,
        47 => 1.45,
        50 => 1.39,
        51 => 1.39,
        52 => 1.38,
        53 => 1.39,
        54 => 1.40,
        75 => 1.51,
        76 => 1.44,
        77 => 1.41,
        78 => 1.36,
        79 => 1.36,
        _ => return None,
    })
}

/// The heavy-atom skeleton perceived from coordinates (atomic numbers and positions in Å, any
/// order, hydrogens included). Errors name the atom (1-based, in the given order).
pub fn skeleton_from_coordinates(atoms: &[(u8, Point)]) -> Result<Molecule, String> {
    let mut radii = Vec::with_capacity(atoms.len());
    for (k, &(z, _)) in atoms.iter().enumerate() {
        radii.push(covalent_radius(z).ok_or_else(|| {
            format!(
                "atom {}: no covalent radius for element {} (Z = {z})",
                k + 1,
                element::symbol(z)
            )
        })?);
    }
    let dist = |i: usize, j: usize| -> f64 {
        let (a, b) = (atoms[i].1, atoms[j].1);
        ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
    };
    let mut mol = Molecule::new();
    let mut node = vec![None; atoms.len()];
    for (k, &(z, p)) in atoms.iter().enumerate() {
        if !p.iter().all(|c| c.is_finite()) {
            return Err(format!("atom {}: coordinates are not finite", k + 1));
        }
        if z != 1 {
            let mut a = Atom::new(z);
            a.hydrogens = 0;
            node[k] = Some(mol.add_atom(a));
        }
    }
    // Candidate heavy–heavy bonds with their excess over the radius sum.
    let mut cand: Vec<(usize, usize, f64)> = Vec::new();
    for i in 0..atoms.len() {
        for j in (i + 1)..atoms.len() {
            let d = dist(i, j);
            if d < OVERLAP_A {
                return Err(format!(
                    "atoms {} and {} are {d:.3} Å apart: overlapping",
                    i + 1,
                    j + 1
                ));
            }
            if node[i].is_some() && node[j].is_some() && d <= radii[i] + radii[j] + BOND_TOLERANCE_A
            {
                cand.push((i, j, d - radii[i] - radii[j]));
            }
        }
    }
    // A candidate bond at less than MIN_BOND_ANGLE_DEG to another bond of the same atom is a
    // ring diagonal (e.g. the 1,3 contact across a five-membered ring, 36° off its side), not a
    // bond: the one further beyond its radius sum goes.
    let mut drop = vec![false; cand.len()];
    let mut at: Vec<Vec<usize>> = vec![Vec::new(); atoms.len()];
    for (k, &(i, j, _)) in cand.iter().enumerate() {
        at[i].push(k);
        at[j].push(k);
    }
    let cos_min = MIN_BOND_ANGLE_DEG.to_radians().cos();
    for (a, list) in at.iter().enumerate() {
        for x in 0..list.len() {
            for y in (x + 1)..list.len() {
                let (kx, ky) = (list[x], list[y]);
                let other = |k: usize| if cand[k].0 == a { cand[k].1 } else { cand[k].0 };
                let (p, q, o) = (atoms[other(kx)].1, atoms[other(ky)].1, atoms[a].1);
                let u = [p[0] - o[0], p[1] - o[1], p[2] - o[2]];
                let v = [q[0] - o[0], q[1] - o[1], q[2] - o[2]];
                let dot = u[0] * v[0] + u[1] * v[1] + u[2] * v[2];
                let nu = (u[0] * u[0] + u[1] * u[1] + u[2] * u[2]).sqrt();
                let nv = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
                if dot / (nu * nv) > cos_min {
                    let worse = if cand[kx].2 >= cand[ky].2 { kx } else { ky };
                    drop[worse] = true;
                }
            }
        }
    }
    for (k, &(i, j, _)) in cand.iter().enumerate() {
        if !drop[k] {
            let (a, b) = (node[i].expect("heavy"), node[j].expect("heavy"));
            mol.add_bond(a, b, Bond::new(BondOrder::Single));
        }
    }
    // Each hydrogen on its nearest heavy atom within bonding distance.
    for h in (0..atoms.len()).filter(|&k| atoms[k].0 == 1) {
        let best = (0..atoms.len())
            .filter(|&k| node[k].is_some())
            .map(|k| (k, dist(h, k)))
            .filter(|&(k, d)| d <= radii[h] + radii[k] + BOND_TOLERANCE_A)
            .min_by(|a, b| a.1.total_cmp(&b.1));
        match best {
            Some((k, _)) => {
                let a = node[k].expect("heavy atom has a node");
                mol.atom_mut(a).hydrogens += 1;
            }
            None => {
                return Err(format!(
                    "atom {} (H): no heavy atom within bonding distance",
                    h + 1
                ));
            }
        }
    }
    Ok(mol)
}

/// The skeleton key of a molecule read from SMILES (or assembled): every bond single, no
/// aromatic flags, charges and isotopes dropped, hydrogens (implicit and explicit atoms)
/// counted on their heavy atom.
pub fn skeleton_of(mol: &Molecule) -> Molecule {
    let mut out = Molecule::new();
    let mut map = vec![None; mol.atom_count()];
    for a in mol.atoms() {
        let at = mol.atom(a);
        if at.element == 1 || at.is_dummy() {
            continue;
        }
        let mut n = Atom::new(at.element);
        n.hydrogens = at.hydrogens
            + mol
                .neighbours(a)
                .filter(|&(b, _)| mol.atom(b).element == 1)
                .count() as u8;
        map[a.index()] = Some(out.add_atom(n));
    }
    for e in mol.graph.edge_indices() {
        let (a, b) = mol.graph.edge_endpoints(e).expect("edge has endpoints");
        if let (Some(x), Some(y)) = (map[a.index()], map[b.index()]) {
            out.add_bond(x, y, Bond::new(BondOrder::Single));
        }
    }
    out
}

/// The canonical key of a skeleton (see the module docs).
pub fn skeleton_key(skeleton: &Molecule) -> String {
    canonical_smiles(skeleton)
}
