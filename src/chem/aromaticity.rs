//! Aromaticity perception: a Hückel 4n+2 rule on rings and fused ring systems, from a table of
//! π-electron contributions per atom type.
//!
//! # Model (documented, our own statement of the common rule)
//!
//! 1. An atom can take part only if it lies on a ring and has a π contribution in this table
//!    (decided on the Kekulé structure):
//!
//!    | atom | condition | π electrons |
//!    |---|---|---|
//!    | any C, N, P, As, B, O, S, Se, Te, Si, Ge | double bond to another ring atom | 1 |
//!    | C, B, Si, Ge (neutral) | exocyclic double bond to O, S, Se, N (C=O, C=S, C=N) | 0 |
//!    | B (neutral), C⁺ | three σ bonds (incl. H), no double bond | 0 (empty p orbital) |
//!    | N, P, As (neutral), C⁻, B⁻... isoelectronic | three σ bonds, no double bond | 2 (lone pair) |
//!    | O, S, Se, Te (neutral), N⁻ | two σ bonds, no double bond | 2 (lone pair) |
//!
//!    Anything else (sp3 centres, S(=O)₂, an exocyclic C=C, radicals) cannot be aromatic.
//! 2. Candidate rings are the shortest cycles through each ring bond among such atoms
//!    ([`crate::chem::rings::shortest_cycles`], independent of atom numbering).
//! 3. A ring whose π electrons sum to 4n+2 is aromatic. Rings that are not aromatic alone are
//!    then tested in fused combinations: every pair of rings sharing a bond, and each whole fused
//!    system of such rings; a combination with 4n+2 electrons over its atoms makes all its rings
//!    aromatic (azulene-type systems).
//! 4. Atoms and bonds of aromatic rings are flagged aromatic; all other flags are cleared.
//!
//! Comparison: this is close to the rule of common cheminformatics toolkits. RDKit (2026.09)
//! differs on rings with a three-coordinate boron (it keeps 1,2-azaborines and oxaborines
//! non-aromatic; here B contributes 0 electrons and such 6-rings are aromatic, as the π model of
//! boron-doped acceptors treats them), and it does not call a fused system aromatic as a whole
//! when no ring or ring pair of it is: the tri-s-triazine (heptazine) core, 14 π electrons over
//! its periphery and centre, is aromatic here and not in RDKit. Both differences are measured in
//! the RDKit fixture test.
//!
//! Reference for the Hückel rule on fused systems: E. Hückel, Z. Phys. 70, 204 (1931); for the
//! electron-count table, the usual textbook assignment (e.g. J. Clayden et al., Organic Chemistry,
//! 2nd ed., ch. 7 and 29; common practice).

use super::mol::{BondOrder, Molecule};
use super::rings;

/// π-electron contribution of each atom (`None` = cannot be aromatic).
fn contributions(mol: &Molecule, ring_atom: &[bool]) -> Vec<Option<u8>> {
    let mut out = vec![None; mol.atom_count()];
    for a in mol.atoms() {
        if !ring_atom[a.index()] {
            continue;
        }
        let atom = mol.atom(a);
        let z = atom.element;
        let q = atom.charge;
        let mut double_ring = 0;
        let mut double_exo_hetero = 0;
        let mut double_exo_other = 0;
        let mut triple = 0;
        let mut sigma = atom.hydrogens as u32;
        for (nb, b) in mol.neighbours(a) {
            sigma += 1;
            match mol.bond(b).order {
                BondOrder::Single => {}
                BondOrder::Double => {
                    if ring_atom[nb.index()] {
                        double_ring += 1;
                    } else if matches!(mol.atom(nb).element, 7 | 8 | 16 | 34) {
                        double_exo_hetero += 1;
                    } else {
                        double_exo_other += 1;
                    }
                }
                _ => triple += 1,
            }
        }
        if triple > 0 || double_exo_other > 0 || double_ring > 1 {
            continue;
        }
        // Radicals (bracket atoms below their lowest valence) are never aromatic: their π count
        // is not that of the table, and written lowercase they could not be read back.
        if let Some(allowed) = super::element::allowed_valences(z, q)
            && mol.valence(a) < allowed[0] as u32
        {
            continue;
        }
        // Isoelectronic group: valence electrons of the neutral analogue.
        let group = match z {
            5 => 3,
            6 | 14 | 32 => 4,
            7 | 15 | 33 => 5,
            8 | 16 | 34 | 52 => 6,
            _ => continue,
        } - q as i32;
        let c = if double_ring == 1 {
            if double_exo_hetero > 0 {
                continue;
            }
            Some(1)
        } else if double_exo_hetero == 1 {
            if matches!(group, 3 | 4) && sigma == 3 {
                Some(0)
            } else {
                None
            }
        } else {
            match (group, sigma) {
                (3, 3) => Some(0),
                (5, 3) => Some(2),
                (6, 2) => Some(2),
                _ => None,
            }
        };
        out[a.index()] = c;
    }
    out
}

fn huckel(e: u32) -> bool {
    e >= 2 && (e - 2).is_multiple_of(4)
}

/// Perceive aromaticity on a Kekulé-form molecule and set the atom and bond flags.
pub fn perceive(mol: &mut Molecule) {
    let ring_bond = rings::ring_bonds(mol);
    let ring_atom = rings::ring_atoms(mol, &ring_bond);
    perceive_with(mol, &ring_bond, &ring_atom);
}

/// [`perceive`] with ring membership already known (it does not change with bond orders).
pub fn perceive_with(mol: &mut Molecule, ring_bond: &[bool], ring_atom: &[bool]) {
    for a in mol.graph.node_weights_mut() {
        a.aromatic = false;
    }
    for b in mol.graph.edge_weights_mut() {
        b.aromatic = false;
    }
    if !ring_bond.iter().any(|&r| r) {
        return;
    }
    let contrib = contributions(mol, ring_atom);
    if contrib.iter().all(|c| c.is_none()) {
        return;
    }
    let atom_ok: Vec<bool> = contrib.iter().map(|c| c.is_some()).collect();
    let cycles = rings::shortest_cycles(mol, &atom_ok, ring_bond);
    if cycles.is_empty() {
        return;
    }
    let electrons = |atoms: &mut dyn Iterator<Item = usize>| -> u32 {
        atoms.map(|a| contrib[a].unwrap_or(0) as u32).sum()
    };
    let mut aromatic_ring = vec![false; cycles.len()];
    for (i, c) in cycles.iter().enumerate() {
        aromatic_ring[i] = huckel(electrons(&mut c.atoms.iter().copied()));
    }
    // Fused combinations of rings that are not aromatic alone.
    let rest: Vec<usize> = (0..cycles.len()).filter(|&i| !aromatic_ring[i]).collect();
    if !rest.is_empty() {
        let n = mol.atom_count();
        let mut mark = vec![false; n];
        let shares_bond = |x: &rings::Cycle, y: &rings::Cycle| {
            x.bonds.iter().any(|b| y.bonds.binary_search(b).is_ok())
        };
        let union_electrons = |set: &[usize], mark: &mut Vec<bool>| -> u32 {
            let mut e = 0;
            let mut touched = Vec::new();
            for &r in set {
                for &a in &cycles[r].atoms {
                    if !mark[a] {
                        mark[a] = true;
                        touched.push(a);
                        e += contrib[a].unwrap_or(0) as u32;
                    }
                }
            }
            for a in touched {
                mark[a] = false;
            }
            e
        };
        let mut newly = Vec::new();
        // pairs
        for (k, &i) in rest.iter().enumerate() {
            for &j in &rest[k + 1..] {
                if shares_bond(&cycles[i], &cycles[j])
                    && huckel(union_electrons(&[i, j], &mut mark))
                {
                    newly.push(i);
                    newly.push(j);
                }
            }
        }
        // whole fused systems (connected components of `rest` by shared bonds)
        let mut comp = vec![usize::MAX; rest.len()];
        for s in 0..rest.len() {
            if comp[s] != usize::MAX {
                continue;
            }
            comp[s] = s;
            let mut stack = vec![s];
            let mut members = vec![rest[s]];
            while let Some(x) = stack.pop() {
                for y in 0..rest.len() {
                    if comp[y] == usize::MAX && shares_bond(&cycles[rest[x]], &cycles[rest[y]]) {
                        comp[y] = s;
                        stack.push(y);
                        members.push(rest[y]);
                    }
                }
            }
            if members.len() > 2 && huckel(union_electrons(&members, &mut mark)) {
                newly.extend(members);
            }
        }
        for i in newly {
            aromatic_ring[i] = true;
        }
    }
    for (i, c) in cycles.iter().enumerate() {
        if !aromatic_ring[i] {
            continue;
        }
        for &a in &c.atoms {
            mol.graph[petgraph::graph::NodeIndex::new(a)].aromatic = true;
        }
        for &b in &c.bonds {
            mol.graph[petgraph::graph::EdgeIndex::new(b)].aromatic = true;
        }
    }
}
