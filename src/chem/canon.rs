//! Canonical atom ranking.
//!
//! Atoms get an initial invariant (element, isotope, charge, hydrogens, degree, aromaticity, ring
//! membership, atom class), which is refined by the ranks of the neighbours and the kinds of the
//! connecting bonds until the partition into classes stops splitting (the iterative refinement of
//! Weininger, Weininger & Weininger, "SMILES. 2. Algorithm for generation of unique SMILES
//! notation", J. Chem. Inf. Comput. Sci. 29, 97–101 (1989)). Ties that remain are symmetry classes
//! (or, rarely, classes refinement cannot split); they are broken one at a time by promoting one
//! atom of the lowest tied class and refining again, as in Schneider, Sayle & Landrum, "Get Your
//! Atoms in Order — An Open-Source Implementation of a Novel and Robust Molecular
//! Canonicalization Algorithm", J. Chem. Inf. Model. 55, 2111–2120 (2015).
//!
//! Bonds enter as *kinds* (single, double, triple, aromatic), so the Kekulé structure chosen for
//! an aromatic system never changes the ranking.
//!
//! Complexity: O(k · n log n) for k refinement rounds; k is small (≈ the diameter) for organic
//! molecules.

use super::mol::Molecule;
use super::rings;

/// Result of ranking: `ranks[a]` in `0..n`, all distinct, and the symmetry classes found by
/// refinement before tie-breaking (`classes[a]`, equal for atoms refinement cannot tell apart).
#[derive(Debug, Clone)]
pub struct Ranking {
    pub ranks: Vec<u32>,
    pub classes: Vec<u32>,
}

/// Compute canonical ranks of the atoms of `mol`.
pub fn canonical_ranks(mol: &Molecule) -> Ranking {
    let n = mol.atom_count();
    let ring_bond = rings::ring_bonds(mol);
    let ring_atom = rings::ring_atoms(mol, &ring_bond);
    // Neighbour lists in CSR form: (neighbour, bond kind).
    let mut offs = Vec::with_capacity(n + 1);
    let mut nbr: Vec<(u32, u8)> = Vec::with_capacity(2 * mol.bond_count());
    for a in mol.atoms() {
        offs.push(nbr.len());
        for (b, e) in mol.neighbours(a) {
            nbr.push((b.index() as u32, mol.bond(e).kind_code()));
        }
    }
    offs.push(nbr.len());

    let inv: Vec<(u64, u32)> = mol
        .atoms()
        .map(|a| {
            let at = mol.atom(a);
            let deg = (offs[a.index() + 1] - offs[a.index()]) as u64;
            // Degree first, so that traversal starts at a terminal atom where there is one.
            let key = (deg & 0xff) << 56
                | (at.element as u64) << 48
                | (at.isotope as u64) << 36
                | ((at.charge as i64 + 64) as u64 & 0x7f) << 28
                | (at.hydrogens as u64 & 0xf) << 24
                | (at.aromatic as u64) << 8
                | (ring_atom[a.index()] as u64) << 4
                | at.chirality.is_some() as u64;
            (key, at.class)
        })
        .collect();
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&x, &y| inv[x].cmp(&inv[y]));
    let mut ranks = vec![0u32; n];
    for i in 1..n {
        ranks[order[i]] = if inv[order[i]] == inv[order[i - 1]] {
            ranks[order[i - 1]]
        } else {
            i as u32
        };
    }
    let mut scratch = Scratch {
        keys: vec![0u64; nbr.len()],
        order,
        new_ranks: vec![0u32; n],
    };
    refine(&mut ranks, &offs, &nbr, &mut scratch);
    let classes = ranks.clone();
    // Break ties.
    loop {
        // Lowest rank shared by more than one atom.
        let mut count = vec![0u32; n];
        for &r in &ranks {
            count[r as usize] += 1;
        }
        let Some(tied) = (0..n).find(|&r| count[r] > 1) else {
            break;
        };
        let pick = (0..n)
            .find(|&a| ranks[a] as usize == tied)
            .expect("a tied atom exists");
        // Every other atom of the class moves one step behind the picked one.
        for a in 0..n {
            if ranks[a] as usize == tied && a != pick {
                ranks[a] += 1;
            }
        }
        refine(&mut ranks, &offs, &nbr, &mut scratch);
    }
    Ranking { ranks, classes }
}

struct Scratch {
    keys: Vec<u64>,
    order: Vec<usize>,
    new_ranks: Vec<u32>,
}

/// Refine `ranks` (each class identified by the index of its first member in sorted order)
/// until stable.
fn refine(ranks: &mut [u32], offs: &[usize], nbr: &[(u32, u8)], s: &mut Scratch) {
    let n = ranks.len();
    let mut classes = distinct(ranks);
    loop {
        if classes == n {
            return;
        }
        for a in 0..n {
            let seg = &mut s.keys[offs[a]..offs[a + 1]];
            for (k, &(b, kind)) in seg.iter_mut().zip(&nbr[offs[a]..offs[a + 1]]) {
                *k = (ranks[b as usize] as u64) << 8 | kind as u64;
            }
            seg.sort_unstable();
        }
        let keys = &s.keys;
        let key = |a: usize| (ranks[a], &keys[offs[a]..offs[a + 1]]);
        s.order.sort_by(|&x, &y| key(x).cmp(&key(y)));
        let order = &s.order;
        s.new_ranks[order[0]] = 0;
        for i in 1..n {
            s.new_ranks[order[i]] = if key(order[i]) == key(order[i - 1]) {
                s.new_ranks[order[i - 1]]
            } else {
                i as u32
            };
        }
        ranks.copy_from_slice(&s.new_ranks);
        let c = distinct(ranks);
        if c == classes {
            return;
        }
        classes = c;
    }
}

fn distinct(ranks: &[u32]) -> usize {
    let mut seen = vec![false; ranks.len()];
    let mut c = 0;
    for &r in ranks {
        if !seen[r as usize] {
            seen[r as usize] = true;
            c += 1;
        }
    }
    c
}
