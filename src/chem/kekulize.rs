//! Kekulisation: turn bonds written as aromatic into an alternation of single and double bonds.
//!
//! Each aromatic atom either needs one double bond inside the aromatic system (a carbon with two
//! aromatic neighbours and one hydrogen, a pyridine-type nitrogen) or does not (a pyrrole-type
//! `[nH]`, a furan oxygen, a carbonyl carbon `c(=O)`), decided from its element, charge, hydrogens
//! and its other bonds against the allowed valences. The atoms that need one must be perfectly
//! matched along aromatic ring bonds. A greedy pass (fewest choices first) settles ordinary
//! systems; if it leaves atoms unmatched, petgraph's maximum matching for general graphs
//! (Gabow's form of Edmonds' blossom algorithm) decides exactly. No perfect matching means no
//! valid Kekulé structure exists and the input is rejected.

use petgraph::graph::UnGraph;

use super::element;
use super::error::SmilesErrorKind;
use super::mol::{AtomIdx, BondOrder, Molecule};

/// Kekulise `mol` in place. `aromatic_input[e]` says whether edge `e` was written aromatic.
/// On failure returns the offending atom and the error kind.
pub(crate) fn kekulize(
    mol: &mut Molecule,
    aromatic_input: &[bool],
    ring_bond: &[bool],
    ring_atom: &[bool],
) -> Result<(), (AtomIdx, SmilesErrorKind)> {
    let n = mol.atom_count();
    if !mol.graph.node_weights().any(|a| a.aromatic) {
        return Ok(());
    }
    // Candidate bonds: written aromatic and on a ring.
    let mut cand = vec![false; mol.bond_count()];
    for e in mol.graph.edge_indices() {
        cand[e.index()] = aromatic_input[e.index()] && ring_bond[e.index()];
    }
    let mut need = vec![false; n];
    for a in mol.atoms() {
        let atom = mol.atom(a);
        if !atom.aromatic {
            continue;
        }
        if !ring_atom[a.index()] {
            return Err((
                a,
                SmilesErrorKind::AromaticOutsideRing(atom.symbol().to_lowercase()),
            ));
        }
        let Some(allowed) = element::allowed_valences(atom.element, atom.charge) else {
            continue;
        };
        let used = mol.valence(a);
        let ok = |v: u32| allowed.iter().any(|&x| x as u32 == v);
        // An aromatic atom already carrying a double bond (written explicitly) needs no other.
        let has_double = mol
            .neighbours(a)
            .any(|(_, b)| mol.bond(b).order != BondOrder::Single);
        if ok(used) || has_double {
            continue;
        }
        if ok(used + 1) {
            need[a.index()] = true;
        } else {
            return Err((
                a,
                SmilesErrorKind::Valence {
                    element: atom.symbol().to_lowercase(),
                    valence: used,
                    charge: atom.charge,
                    allowed: allowed
                        .iter()
                        .map(|x| x.to_string())
                        .collect::<Vec<_>>()
                        .join(" or "),
                },
            ));
        }
    }
    // Adjacency (CSR) restricted to candidate bonds between atoms that need a double bond.
    let mut deg = vec![0usize; n + 1];
    let mut pairs: Vec<(usize, usize, usize)> = Vec::new();
    for e in mol.graph.edge_indices() {
        if !cand[e.index()] {
            continue;
        }
        let (a, b) = mol.graph.edge_endpoints(e).expect("edge exists");
        let (a, b) = (a.index(), b.index());
        if need[a] && need[b] {
            pairs.push((a, b, e.index()));
            deg[a] += 1;
            deg[b] += 1;
        }
    }
    let mut offs = vec![0usize; n + 1];
    for i in 0..n {
        offs[i + 1] = offs[i] + deg[i];
    }
    let mut fill = offs.clone();
    let mut flat = vec![(0usize, 0usize); offs[n]];
    for &(a, b, e) in &pairs {
        flat[fill[a]] = (b, e);
        fill[a] += 1;
        flat[fill[b]] = (a, e);
        fill[b] += 1;
    }
    let adj = |i: usize| &flat[offs[i]..offs[i + 1]];
    // A connected piece of the need-subgraph with an odd number of atoms can never be matched;
    // naming its first atom points the user at the faulty ring (e.g. a five-membered ring of
    // aromatic carbons) rather than at an arbitrary unmatched atom elsewhere.
    let mut comp = vec![usize::MAX; n];
    for s0 in 0..n {
        if !need[s0] || comp[s0] != usize::MAX {
            continue;
        }
        comp[s0] = s0;
        let mut stack = vec![s0];
        let mut size = 0usize;
        let mut first = s0;
        while let Some(x) = stack.pop() {
            size += 1;
            first = first.min(x);
            for &(y, _) in adj(x) {
                if comp[y] == usize::MAX {
                    comp[y] = s0;
                    stack.push(y);
                }
            }
        }
        if size % 2 == 1 {
            return Err((AtomIdx::new(first), SmilesErrorKind::Kekulise));
        }
    }
    let mut mate = vec![usize::MAX; n];
    let mut double = vec![false; mol.bond_count()];
    let mut remaining: usize = need.iter().filter(|&&x| x).count();
    if !remaining.is_multiple_of(2) {
        let bad = (0..n).find(|&i| need[i]).unwrap_or(0);
        return Err((AtomIdx::new(bad), SmilesErrorKind::Kekulise));
    }
    // Greedy: repeatedly match the unmatched atom with the fewest free partners.
    let free_count = |i: usize, mate: &Vec<usize>| {
        adj(i)
            .iter()
            .filter(|(j, _)| mate[*j] == usize::MAX)
            .count()
    };
    let mut greedy_ok = true;
    while remaining > 0 {
        let mut best: Option<(usize, usize)> = None;
        for i in 0..n {
            if need[i] && mate[i] == usize::MAX {
                let c = free_count(i, &mate);
                if best.is_none_or(|(_, bc)| c < bc) {
                    best = Some((i, c));
                    if c <= 1 {
                        break;
                    }
                }
            }
        }
        let Some((i, c)) = best else { break };
        if c == 0 {
            greedy_ok = false;
            break;
        }
        let &(j, e) = adj(i)
            .iter()
            .filter(|(j, _)| mate[*j] == usize::MAX)
            .min_by_key(|(j, _)| (free_count(*j, &mate), *j))
            .expect("c > 0");
        mate[i] = j;
        mate[j] = i;
        double[e] = true;
        remaining -= 2;
    }
    if !greedy_ok {
        // Exact maximum matching on the need-subgraph.
        let idx: Vec<usize> = (0..n).filter(|&i| need[i]).collect();
        let mut local = vec![usize::MAX; n];
        for (k, &i) in idx.iter().enumerate() {
            local[i] = k;
        }
        let mut g: UnGraph<(), usize, u32> = UnGraph::with_capacity(idx.len(), idx.len() * 2);
        for _ in &idx {
            g.add_node(());
        }
        for &i in &idx {
            for &(j, e) in adj(i) {
                if i < j {
                    g.add_edge(
                        petgraph::graph::NodeIndex::new(local[i]),
                        petgraph::graph::NodeIndex::new(local[j]),
                        e,
                    );
                }
            }
        }
        let m = petgraph::algo::maximum_matching(&g);
        if !m.is_perfect() {
            let bad = idx
                .iter()
                .find(|&&i| m.mate(petgraph::graph::NodeIndex::new(local[i])).is_none())
                .copied()
                .unwrap_or(idx[0]);
            return Err((AtomIdx::new(bad), SmilesErrorKind::Kekulise));
        }
        double.iter_mut().for_each(|d| *d = false);
        for (a, b) in m.edges() {
            let e = g.find_edge(a, b).expect("matched edge exists");
            double[g[e]] = true;
        }
    }
    for e in mol.graph.edge_indices() {
        if aromatic_input[e.index()] {
            mol.graph[e].order = if double[e.index()] {
                BondOrder::Double
            } else {
                BondOrder::Single
            };
        }
    }
    for a in mol.graph.node_weights_mut() {
        a.aromatic = false;
    }
    Ok(())
}
