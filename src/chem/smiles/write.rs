//! Canonical SMILES writer.
//!
//! Atoms are ranked by [`crate::chem::canon::canonical_ranks`]; each component is written by a
//! depth-first traversal that starts at its lowest-ranked atom and visits neighbours in rank
//! order. Ring-closure digits are assigned lowest-free-first; branches are written in rank order
//! with the last one unparenthesised. Aromatic atoms (from perception) are written lowercase and
//! bonds between them implicit, single bonds between two aromatic atoms as `-`. Atoms use the
//! organic subset whenever its implicit-hydrogen rule gives their hydrogen count; otherwise a
//! bracket atom. Tetrahedral marks are re-expressed for the output neighbour order; marks on atoms
//! with two symmetry-equivalent neighbours (no true stereocentre) are dropped.
//!
//! Not written: cis/trans marks (`/`, `\`). They are kept on the parsed bonds but do not yet
//! enter the canonical string, so E and Z isomers share one canonical SMILES (documented limit).

use std::fmt::Write;

use super::super::canon::{Ranking, canonical_ranks};
use super::super::element;
use super::super::mol::{AtomIdx, BondOrder, Chirality, Molecule, StereoRef};

/// Version of the canonicaliser; part of the candidate identity hash. Bump it whenever the
/// canonical string of any molecule could change.
pub const CANONICALISER_VERSION: u32 = 1;

/// Canonical SMILES of `mol`.
///
/// # Example
/// ```
/// use lumisift::chem::{parse_smiles, canonical_smiles};
/// let a = canonical_smiles(&parse_smiles("C1=CC=NC=C1").unwrap());
/// let b = canonical_smiles(&parse_smiles("n1ccccc1").unwrap());
/// assert_eq!(a, b);
/// ```
pub fn canonical_smiles(mol: &Molecule) -> String {
    let ranking = canonical_ranks(mol);
    write_smiles(mol, &ranking)
}

/// Write `mol` with the traversal order given by `ranking`.
pub fn write_smiles(mol: &Molecule, ranking: &Ranking) -> String {
    let n = mol.atom_count();
    let ranks = &ranking.ranks;
    let mut out = String::with_capacity(n * 3);
    if n == 0 {
        return out;
    }
    // Neighbour lists in CSR form, each sorted by rank.
    let mut offs = Vec::with_capacity(n + 1);
    let mut adj: Vec<(usize, usize)> = Vec::with_capacity(2 * mol.bond_count());
    for a in mol.atoms() {
        offs.push(adj.len());
        let start = adj.len();
        adj.extend(mol.neighbours(a).map(|(b, e)| (b.index(), e.index())));
        adj[start..].sort_unstable_by_key(|&(b, _)| ranks[b]);
    }
    offs.push(adj.len());
    // Pass 1: depth-first tree; each adjacency slot becomes a tree child, a ring bond, or
    // nothing (the way back to the parent).
    const NONE: u8 = 0;
    const CHILD: u8 = 1;
    const RING: u8 = 2;
    let m = mol.bond_count();
    let mut slot_kind = vec![NONE; adj.len()];
    let mut visited = vec![false; n];
    let mut edge_used = vec![false; m];
    let mut starts = Vec::new();
    let mut by_rank: Vec<usize> = (0..n).collect();
    by_rank.sort_unstable_by_key(|&a| ranks[a]);
    let mut stack: Vec<(usize, usize)> = Vec::with_capacity(n);
    for &root in &by_rank {
        if visited[root] {
            continue;
        }
        starts.push(root);
        visited[root] = true;
        stack.push((root, offs[root]));
        while let Some(&mut (a, ref mut i)) = stack.last_mut() {
            if *i >= offs[a + 1] {
                stack.pop();
                continue;
            }
            let slot = *i;
            let (b, e) = adj[slot];
            *i += 1;
            if edge_used[e] {
                continue;
            }
            edge_used[e] = true;
            if visited[b] {
                slot_kind[slot] = RING;
                let back = (offs[b]..offs[b + 1])
                    .find(|&k| adj[k].1 == e)
                    .expect("both ends list the bond");
                slot_kind[back] = RING;
            } else {
                visited[b] = true;
                slot_kind[slot] = CHILD;
                stack.push((b, offs[b]));
            }
        }
    }
    // Pass 2: write.
    let mut written = vec![false; n];
    let mut digit_of_edge = vec![0u8; m];
    let mut free_digits: Vec<bool> = vec![true; 100];
    let mut closes: Vec<(u8, usize)> = Vec::new();
    let mut opens: Vec<usize> = Vec::new();
    let mut children: Vec<(usize, usize)> = Vec::new();
    enum Step {
        Atom(usize, Option<usize>),
        Open,
        Close,
    }
    let mut steps: Vec<Step> = Vec::with_capacity(2 * n);
    for (ci, &root) in starts.iter().enumerate() {
        if ci > 0 {
            out.push('.');
        }
        steps.push(Step::Atom(root, None));
        while let Some(step) = steps.pop() {
            let (a, from) = match step {
                Step::Open => {
                    out.push('(');
                    continue;
                }
                Step::Close => {
                    out.push(')');
                    continue;
                }
                Step::Atom(a, from) => (a, from),
            };
            if let Some(e) = from {
                write_bond(mol, e, &mut out);
            }
            // Ring bonds at a: closures (partner written) by digit, then openings by partner
            // rank (the slots are already in rank order).
            closes.clear();
            opens.clear();
            children.clear();
            for k in offs[a]..offs[a + 1] {
                let (b, e) = adj[k];
                match slot_kind[k] {
                    RING if written[b] => closes.push((digit_of_edge[e], b)),
                    RING => opens.push(k),
                    CHILD => children.push((b, e)),
                    _ => {}
                }
            }
            closes.sort_unstable();
            let chir = if mol.atom(AtomIdx::new(a)).chirality.is_some() {
                // Neighbour order as written, for the chirality mark.
                let parent = from.map(|e| other_end(mol, e, a));
                let mut order: Vec<usize> = Vec::with_capacity(4);
                order.extend(parent);
                order.extend(closes.iter().map(|c| c.1));
                order.extend(opens.iter().map(|&k| adj[k].0));
                order.extend(children.iter().map(|c| c.0));
                output_chirality(mol, ranking, a, parent, &order)
            } else {
                None
            };
            write_atom(mol, a, chir, &mut out);
            written[a] = true;
            for &(d, _) in &closes {
                free_digits[d as usize] = true;
                push_digit(d, &mut out);
            }
            for &k in &opens {
                let e = adj[k].1;
                let d = (1..100).find(|&d| free_digits[d]).unwrap_or(99) as u8;
                free_digits[d as usize] = false;
                digit_of_edge[e] = d;
                write_bond(mol, e, &mut out);
                push_digit(d, &mut out);
            }
            // Push in reverse so the lowest-ranked child is written first.
            for (k, &(c, e)) in children.iter().enumerate().rev() {
                let last = k + 1 == children.len();
                if !last {
                    steps.push(Step::Close);
                }
                steps.push(Step::Atom(c, Some(e)));
                if !last {
                    steps.push(Step::Open);
                }
            }
        }
    }
    out
}

fn other_end(mol: &Molecule, e: usize, a: usize) -> usize {
    let (x, y) = mol
        .graph
        .edge_endpoints(petgraph::graph::EdgeIndex::new(e))
        .expect("edge exists");
    if x.index() == a { y.index() } else { x.index() }
}

fn push_digit(d: u8, out: &mut String) {
    if d < 10 {
        out.push((b'0' + d) as char);
    } else {
        let _ = write!(out, "%{d:02}");
    }
}

fn write_bond(mol: &Molecule, e: usize, out: &mut String) {
    let eidx = petgraph::graph::EdgeIndex::new(e);
    let bond = mol.bond(eidx);
    if bond.aromatic {
        return;
    }
    match bond.order {
        BondOrder::Single => {
            let (x, y) = mol.graph.edge_endpoints(eidx).expect("edge exists");
            if mol.atom(x).aromatic && mol.atom(y).aromatic {
                out.push('-');
            }
        }
        BondOrder::Double => out.push('='),
        BondOrder::Triple => out.push('#'),
        BondOrder::Quadruple => out.push('$'),
    }
}

/// The chirality mark to write for atom `a` given the written neighbour order, or `None` when the
/// atom carries no mark or is not a true stereocentre.
fn output_chirality(
    mol: &Molecule,
    ranking: &Ranking,
    a: usize,
    parent: Option<usize>,
    written_order: &[usize],
) -> Option<Chirality> {
    let atom = mol.atom(AtomIdx::new(a));
    let chir = atom.chirality?;
    let has_h = atom.hydrogens > 0;
    let slots = written_order.len() + has_h as usize;
    if atom.stereo_refs.len() != slots || !(3..=4).contains(&slots) || atom.hydrogens > 1 {
        return None;
    }
    // Symmetry-equivalent neighbours: not a stereocentre.
    let mut cls: Vec<u32> = written_order.iter().map(|&b| ranking.classes[b]).collect();
    cls.sort_unstable();
    if cls.windows(2).any(|w| w[0] == w[1]) {
        return None;
    }
    // Output reference order: parent, implicit H, then the rest (OpenSMILES 3.5.1).
    let mut out_refs: Vec<StereoRef> = Vec::with_capacity(slots);
    let mut rest = written_order.iter();
    if parent.is_some() {
        out_refs.push(StereoRef::Atom(AtomIdx::new(
            *rest.next().expect("parent in order"),
        )));
    }
    if has_h {
        out_refs.push(StereoRef::ImplicitH);
    }
    out_refs.extend(rest.map(|&b| StereoRef::Atom(AtomIdx::new(b))));
    // Parity of the permutation taking stereo_refs to out_refs.
    let mut perm: Vec<usize> = Vec::with_capacity(slots);
    for r in &out_refs {
        perm.push(atom.stereo_refs.iter().position(|s| s == r)?);
    }
    let mut parity = false;
    let mut seen = vec![false; slots];
    for i in 0..slots {
        if seen[i] {
            continue;
        }
        let mut j = i;
        let mut len = 0;
        while !seen[j] {
            seen[j] = true;
            j = perm[j];
            len += 1;
        }
        if len % 2 == 0 {
            parity = !parity;
        }
    }
    Some(if parity { chir.inverted() } else { chir })
}

fn write_atom(mol: &Molecule, a: usize, chir: Option<Chirality>, out: &mut String) {
    let idx = AtomIdx::new(a);
    let atom = mol.atom(idx);
    let sym = element::symbol(atom.element);
    let plain = atom.isotope == 0
        && atom.charge == 0
        && atom.class == 0
        && chir.is_none()
        && (atom.element == element::DUMMY && atom.hydrogens == 0
            || element::is_organic_subset(atom.element)
                && implicit_h_rule(mol, idx) == atom.hydrogens as u32);
    if plain {
        if atom.aromatic {
            for c in sym.chars() {
                out.push(c.to_ascii_lowercase());
            }
        } else {
            out.push_str(sym);
        }
        return;
    }
    out.push('[');
    if atom.isotope > 0 {
        let _ = write!(out, "{}", atom.isotope);
    }
    if atom.aromatic {
        for c in sym.chars() {
            out.push(c.to_ascii_lowercase());
        }
    } else {
        out.push_str(sym);
    }
    match chir {
        Some(Chirality::AntiClockwise) => out.push('@'),
        Some(Chirality::Clockwise) => out.push_str("@@"),
        None => {}
    }
    match atom.hydrogens {
        0 => {}
        1 => out.push('H'),
        h => {
            let _ = write!(out, "H{h}");
        }
    }
    match atom.charge {
        0 => {}
        1 => out.push('+'),
        -1 => out.push('-'),
        q if q > 0 => {
            let _ = write!(out, "+{q}");
        }
        q => {
            let _ = write!(out, "-{}", -q);
        }
    }
    if atom.class > 0 {
        let _ = write!(out, ":{}", atom.class);
    }
    out.push(']');
}

/// Hydrogens the organic-subset rule would give this atom as written (aromatic bonds count 1;
/// an aromatic atom with aromatic bonds reserves one valence for its π bond).
fn implicit_h_rule(mol: &Molecule, a: AtomIdx) -> u32 {
    let atom = mol.atom(a);
    let mut s = 0u32;
    let mut arom = 0u32;
    for (_, e) in mol.neighbours(a) {
        let b = mol.bond(e);
        if b.aromatic {
            s += 1;
            arom += 1;
        } else {
            s += b.order.valence() as u32;
        }
    }
    let vals = element::default_valences(atom.element);
    match vals.iter().map(|&v| v as u32).find(|&v| v >= s) {
        Some(v) if atom.aromatic && arom > 0 => v.saturating_sub(s + 1),
        Some(v) => v - s,
        None => 0,
    }
}
