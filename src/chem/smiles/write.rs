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
//! Cis/trans configurations of double bonds are written as `/` and `\` marks relative to the
//! output order (see `cis_trans_marks`).

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
    // Position of each atom in the output (depth-first preorder = writing order).
    let mut pos = vec![0usize; n];
    let mut next_pos = 0;
    for &root in &by_rank {
        if visited[root] {
            continue;
        }
        starts.push(root);
        visited[root] = true;
        pos[root] = next_pos;
        next_pos += 1;
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
                pos[b] = next_pos;
                next_pos += 1;
                slot_kind[slot] = CHILD;
                stack.push((b, offs[b]));
            }
        }
    }
    let marks = cis_trans_marks(mol, ranking, &pos);
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
                write_bond(mol, e, &marks, &mut out);
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
                write_bond(mol, e, &marks, &mut out);
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

fn write_bond(mol: &Molecule, e: usize, marks: &[Option<bool>], out: &mut String) {
    let eidx = petgraph::graph::EdgeIndex::new(e);
    let bond = mol.bond(eidx);
    if let Some(up) = marks.get(e).copied().flatten() {
        out.push(if up { '/' } else { '\\' });
        return;
    }
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

/// `/` or `\` for single bonds next to configured double bonds, each read from the end written
/// first to the end written second (`Some(true)` = `/`). Empty when the molecule has none.
///
/// Double bonds are taken in writing order. On each side one neighbour carries the mark: one that
/// already has a mark from a neighbouring double bond if there is one (conjugated chains share
/// marks), else the first written. A configuration is dropped when one end has two
/// symmetry-equivalent neighbours or none, when the bond is on a ring, or, in a conjugated chain,
/// when marks already placed cannot express it.
fn cis_trans_marks(mol: &Molecule, ranking: &Ranking, pos: &[usize]) -> Vec<Option<bool>> {
    let mut stereo: Vec<(usize, petgraph::graph::EdgeIndex)> = mol
        .graph
        .edge_indices()
        .filter(|&e| mol.bond(e).stereo.is_some() && mol.bond(e).order == BondOrder::Double)
        .map(|e| {
            let (x, y) = mol.graph.edge_endpoints(e).expect("edge exists");
            (pos[x.index()].min(pos[y.index()]), e)
        })
        .collect();
    if stereo.is_empty() {
        return Vec::new();
    }
    stereo.sort_unstable_by_key(|&(p, e)| (p, e.index()));
    let ring_bond = crate::chem::rings::ring_bonds(mol);
    let mut marks: Vec<Option<bool>> = vec![None; mol.bond_count()];
    for (_, e) in stereo {
        if ring_bond[e.index()] {
            continue;
        }
        let st = mol.bond(e).stereo.expect("filtered on stereo");
        let (src, dst) = mol.graph.edge_endpoints(e).expect("edge exists");
        // x is written first.
        let (x, y, a_ref, b_ref) = if pos[src.index()] < pos[dst.index()] {
            (src, dst, st.a, st.b)
        } else {
            (dst, src, st.b, st.a)
        };
        let others = |end: AtomIdx, other: AtomIdx| -> Vec<(AtomIdx, usize)> {
            let mut v: Vec<(AtomIdx, usize)> = mol
                .neighbours(end)
                .filter(|&(n, _)| n != other)
                .map(|(n, b)| (n, b.index()))
                .collect();
            v.sort_unstable_by_key(|&(n, _)| pos[n.index()]);
            v
        };
        let (xs, ys) = (others(x, y), others(y, x));
        let valid = |v: &[(AtomIdx, usize)], end: AtomIdx| match v.len() {
            1 => true,
            2 => {
                mol.atom(end).hydrogens == 0
                    && ranking.classes[v[0].0.index()] != ranking.classes[v[1].0.index()]
            }
            _ => false,
        };
        if !valid(&xs, x) || !valid(&ys, y) || !xs.iter().any(|s| s.0 == a_ref) {
            continue;
        }
        let pick = |v: &[(AtomIdx, usize)]| {
            *v.iter()
                .find(|&&(_, b)| marks[b].is_some())
                .unwrap_or(&v[0])
        };
        let (rx, ex) = pick(&xs);
        let (ry, ey) = pick(&ys);
        // Configuration relative to the chosen references.
        let mut trans = st.trans;
        if rx != a_ref {
            trans = !trans;
        }
        if ry != b_ref {
            trans = !trans;
        }
        // Symbols read rx→x and y→ry; equal means trans.
        let reads_forward = |from: AtomIdx, to: AtomIdx| pos[from.index()] < pos[to.index()];
        let sym_left = match marks[ex] {
            Some(m) => {
                if reads_forward(rx, x) {
                    m
                } else {
                    !m
                }
            }
            None => true,
        };
        let sym_right = if trans { sym_left } else { !sym_left };
        let mark_right = if reads_forward(y, ry) {
            sym_right
        } else {
            !sym_right
        };
        if let Some(m) = marks[ey]
            && m != mark_right
        {
            continue; // cannot be expressed with the marks already placed
        }
        marks[ex] = Some(if reads_forward(rx, x) {
            sym_left
        } else {
            !sym_left
        });
        marks[ey] = Some(mark_right);
    }
    marks
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
    if atom.stereo_refs.len() != slots || atom.hydrogens > 1 {
        return None;
    }
    // A tetrahedral centre: four σ neighbours (one may be the implicit H), or three around a
    // P, S or Se whose lone pair is the fourth (sulfoxides, phosphines).
    let idx = AtomIdx::new(a);
    let all_single = mol
        .neighbours(idx)
        .all(|(_, b)| mol.bond(b).order == BondOrder::Single && !mol.bond(b).aromatic);
    let tetrahedral = match slots {
        4 => all_single && !atom.aromatic,
        3 => matches!(atom.element, 15 | 16 | 34) && !atom.aromatic,
        _ => false,
    };
    if !tetrahedral {
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
