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
//! Stereo marks do not enter the ranking (only the constitution does); the writer expresses
//! each kept mark relative to the canonical order, so enantiomers still get distinct strings.
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
                | (ring_atom[a.index()] as u64) << 4;
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
    let packable = n < (1 << 13) && (0..n).all(|a| offs[a + 1] - offs[a] <= 4);
    let mut scratch = Scratch {
        keys: vec![0u64; nbr.len()],
        packed: vec![0u64; n],
        new_ranks: vec![0u32; n],
    };
    refine(&mut ranks, &mut order, &offs, &nbr, packable, &mut scratch);
    let classes = ranks.clone();
    // Break ties: promote the first atom of the lowest tied class, refine again.
    loop {
        let tied = (1..n).find(|&i| ranks[order[i]] == ranks[order[i - 1]]);
        let Some(i) = tied else { break };
        // Classes are contiguous in `order`, so the first tie starts at i − 1.
        let r = ranks[order[i]];
        let mut k = i;
        while k < n && ranks[order[k]] == r {
            ranks[order[k]] = r + 1;
            k += 1;
        }
        refine(&mut ranks, &mut order, &offs, &nbr, packable, &mut scratch);
    }
    Ranking { ranks, classes }
}

struct Scratch {
    keys: Vec<u64>,
    packed: Vec<u64>,
    new_ranks: Vec<u32>,
}

/// Refine `ranks` until stable. `order` lists the atoms sorted by rank, and a class's rank is
/// the position of its first member in `order`. Each round re-sorts only the classes with more
/// than one member by their neighbours' (rank, bond kind) lists (taken from the previous round,
/// so the result equals a full re-sort). With `packable` (all degrees ≤ 4, fewer than 8192
/// atoms) a sorted neighbour list packs into one `u64` (13 + 3 bits per neighbour); otherwise the
/// lists are compared as slices.
fn refine(
    ranks: &mut [u32],
    order: &mut [usize],
    offs: &[usize],
    nbr: &[(u32, u8)],
    packable: bool,
    s: &mut Scratch,
) {
    let n = ranks.len();
    loop {
        let mut split = false;
        s.new_ranks.copy_from_slice(ranks);
        let mut i = 0;
        while i < n {
            let r = ranks[order[i]];
            let mut j = i + 1;
            while j < n && ranks[order[j]] == r {
                j += 1;
            }
            if j - i > 1 {
                for &a in &order[i..j] {
                    let seg = &mut s.keys[offs[a]..offs[a + 1]];
                    for (k, &(b, kind)) in seg.iter_mut().zip(&nbr[offs[a]..offs[a + 1]]) {
                        *k = (ranks[b as usize] as u64) << 3 | kind as u64;
                    }
                    seg.sort_unstable();
                    if packable {
                        let mut p = 0u64;
                        for &k in seg.iter() {
                            p = p << 16 | (k + 1);
                        }
                        s.packed[a] = p;
                    }
                }
                let seg = &mut order[i..j];
                if packable {
                    let packed = &s.packed;
                    seg.sort_unstable_by_key(|&a| (packed[a], a));
                } else {
                    let keys = &s.keys;
                    seg.sort_unstable_by(|&x, &y| {
                        keys[offs[x]..offs[x + 1]]
                            .cmp(&keys[offs[y]..offs[y + 1]])
                            .then(x.cmp(&y))
                    });
                }
                let same = |x: usize, y: usize| {
                    if packable {
                        s.packed[x] == s.packed[y]
                    } else {
                        s.keys[offs[x]..offs[x + 1]] == s.keys[offs[y]..offs[y + 1]]
                    }
                };
                let mut class_start = i;
                for k in i + 1..j {
                    if !same(order[k], order[k - 1]) {
                        class_start = k;
                        split = true;
                    }
                    s.new_ranks[order[k]] = class_start as u32;
                }
            }
            i = j;
        }
        ranks.copy_from_slice(&s.new_ranks);
        if !split {
            return;
        }
    }
}
