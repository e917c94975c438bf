//! Ring perception: which bonds lie on a cycle, the cyclomatic number, and the set of shortest
//! cycles through each ring bond (used by aromaticity perception).
//!
//! - Ring bonds: a bond is on a cycle iff it is not a bridge; bridges by Tarjan's low-link
//!   depth-first search (Tarjan, SIAM J. Comput. 1, 146 (1972)), iterative, O(V + E).
//! - Ring count: the cyclomatic number E − V + C (the size of any minimum cycle basis, hence
//!   equal to the size of the SSSR; Downs et al., J. Chem. Inf. Comput. Sci. 29, 172 (1989)).
//! - Shortest cycles: for every ring bond (u, v), all shortest u–v paths avoiding that bond
//!   (breadth-first search), closed into cycles and deduplicated. The resulting set does not depend
//!   on atom numbering (unlike a single SSSR pick), which keeps aromaticity, and thus canonical
//!   SMILES, independent of input order. A cap on cycles per bond bounds pathological cages.

use petgraph::visit::EdgeRef;

use super::mol::Molecule;

/// Compact adjacency (CSR): `offs[v]..offs[v + 1]` indexes `(neighbour, edge)` pairs of atom `v`.
pub(crate) fn csr(mol: &Molecule) -> (Vec<usize>, Vec<(usize, usize)>) {
    let n = mol.atom_count();
    let mut offs = Vec::with_capacity(n + 1);
    let mut adj = Vec::with_capacity(2 * mol.bond_count());
    for v in 0..n {
        offs.push(adj.len());
        for e in mol.graph.edges(petgraph::graph::NodeIndex::new(v)) {
            let o = if e.source().index() == v {
                e.target().index()
            } else {
                e.source().index()
            };
            adj.push((o, e.id().index()));
        }
    }
    offs.push(adj.len());
    (offs, adj)
}

/// `true` for each bond (by edge index) that lies on a cycle.
pub fn ring_bonds(mol: &Molecule) -> Vec<bool> {
    let n = mol.atom_count();
    let m = mol.bond_count();
    let mut in_ring = vec![true; m];
    if m == 0 {
        return in_ring;
    }
    let (offs, adj) = csr(mol);
    let mut disc = vec![u32::MAX; n];
    let mut low = vec![0u32; n];
    let mut time = 0u32;
    // Stack frames: (atom, edge to parent, next adjacency position).
    let mut stack: Vec<(usize, usize, usize)> = Vec::with_capacity(n);
    for root in 0..n {
        if disc[root] != u32::MAX {
            continue;
        }
        disc[root] = time;
        low[root] = time;
        time += 1;
        stack.push((root, usize::MAX, offs[root]));
        while let Some(top) = stack.last_mut() {
            let (v, pe) = (top.0, top.1);
            if top.2 < offs[v + 1] {
                let (w, e) = adj[top.2];
                top.2 += 1;
                if e == pe {
                    continue;
                }
                if disc[w] == u32::MAX {
                    disc[w] = time;
                    low[w] = time;
                    time += 1;
                    stack.push((w, e, offs[w]));
                } else {
                    low[v] = low[v].min(disc[w]);
                }
            } else {
                stack.pop();
                if let Some(parent) = stack.last() {
                    let p = parent.0;
                    low[p] = low[p].min(low[v]);
                    if low[v] > disc[p] {
                        in_ring[pe] = false;
                    }
                }
            }
        }
    }
    in_ring
}

/// `true` for each atom that lies on a cycle, from [`ring_bonds`].
pub fn ring_atoms(mol: &Molecule, ring_bond: &[bool]) -> Vec<bool> {
    let mut r = vec![false; mol.atom_count()];
    for e in mol.graph.edge_indices() {
        if ring_bond[e.index()] {
            let (a, b) = mol.graph.edge_endpoints(e).expect("edge exists");
            r[a.index()] = true;
            r[b.index()] = true;
        }
    }
    r
}

/// Cyclomatic number E − V + C: the number of rings in the smallest set of smallest rings.
pub fn ring_count(mol: &Molecule) -> usize {
    (mol.bond_count() + mol.component_count()).saturating_sub(mol.atom_count())
}

/// A cycle as its atoms in order and its bonds (sorted edge indices, for identity).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Cycle {
    pub atoms: Vec<usize>,
    pub bonds: Vec<usize>,
}

/// Maximum shortest cycles kept per ring bond.
const MAX_CYCLES_PER_BOND: usize = 16;
/// Rings larger than this are not considered (aromaticity of macrocycles is out of scope).
pub const MAX_RING_SIZE: usize = 24;

/// All shortest cycles through each ring bond of the subgraph formed by atoms with
/// `atom_ok[a]` and bonds with `bond_ok[e]`. Deterministic and independent of atom numbering
/// as a set; returned sorted by (size, bonds).
///
/// Complexity: one breadth-first search per ring bond, stopped at the bond's own cycle length,
/// so O(E · k) for rings of size k in ordinary fused systems.
pub fn shortest_cycles(mol: &Molecule, atom_ok: &[bool], bond_ok: &[bool]) -> Vec<Cycle> {
    let n = mol.atom_count();
    // Adjacency of the subgraph only, so the searches below need no per-edge filtering.
    let (offs, adj) = {
        let mut offs = Vec::with_capacity(n + 1);
        let mut adj = Vec::with_capacity(2 * mol.bond_count());
        for x in 0..n {
            offs.push(adj.len());
            if !atom_ok[x] {
                continue;
            }
            for e in mol.graph.edges(petgraph::graph::NodeIndex::new(x)) {
                let y = if e.source().index() == x {
                    e.target().index()
                } else {
                    e.source().index()
                };
                if bond_ok[e.id().index()] && atom_ok[y] {
                    adj.push((y, e.id().index()));
                }
            }
        }
        offs.push(adj.len());
        (offs, adj)
    };
    let mut out: Vec<Cycle> = Vec::new();
    let mut dist = vec![u32::MAX; n];
    let mut queue: Vec<usize> = Vec::with_capacity(n);
    let mut path_atoms: Vec<usize> = Vec::with_capacity(MAX_RING_SIZE);
    let mut path_edges: Vec<usize> = Vec::with_capacity(MAX_RING_SIZE);
    let mut cursor: Vec<usize> = Vec::with_capacity(MAX_RING_SIZE);
    let mut bonds_buf: Vec<usize> = Vec::with_capacity(MAX_RING_SIZE);
    // Ring systems of the subgraph (connected pieces of its ring bonds). A system with as many
    // bonds as atoms is one simple cycle (an isolated benzene ring, the commonest case): it is
    // its own only cycle, taken by walking round it instead of one search per bond.
    let mut root: Vec<usize> = (0..n).collect();
    fn find(root: &mut [usize], mut x: usize) -> usize {
        while root[x] != x {
            root[x] = root[root[x]];
            x = root[x];
        }
        x
    }
    for u in 0..n {
        for &(v, _) in &adj[offs[u]..offs[u + 1]] {
            if v > u {
                let (ru, rv) = (find(&mut root, u), find(&mut root, v));
                root[ru.max(rv)] = ru.min(rv);
            }
        }
    }
    // A system is one simple cycle when every one of its atoms has exactly two ring bonds in
    // the subgraph (an indoline's N hanging off its benzene ring does not).
    let mut has_atoms = vec![false; n];
    let mut not_simple = vec![false; n];
    for u in 0..n {
        let deg = offs[u + 1] - offs[u];
        if deg > 0 {
            let r = find(&mut root, u);
            has_atoms[r] = true;
            not_simple[r] |= deg != 2;
        }
    }
    let simple = |r: usize| has_atoms[r] && !not_simple[r];
    for u in 0..n {
        let r = find(&mut root, u);
        if !simple(r) || r != u {
            continue;
        }
        // Walk the cycle from its lowest atom u.
        path_atoms.clear();
        bonds_buf.clear();
        let (mut prev_e, mut x) = (usize::MAX, u);
        loop {
            path_atoms.push(x);
            let &(y, e) = adj[offs[x]..offs[x + 1]]
                .iter()
                .find(|&&(_, e)| e != prev_e)
                .expect("every atom of a simple cycle has two ring bonds");
            bonds_buf.push(e);
            prev_e = e;
            x = y;
            if x == u {
                break;
            }
        }
        if path_atoms.len() > MAX_RING_SIZE {
            continue;
        }
        bonds_buf.sort_unstable();
        out.push(Cycle {
            atoms: path_atoms.clone(),
            bonds: bonds_buf.clone(),
        });
    }
    for u in 0..n {
        let r = find(&mut root, u);
        if simple(r) {
            continue;
        }
        for &(v, eid) in &adj[offs[u]..offs[u + 1]] {
            if v < u {
                continue;
            }
            // Breadth-first search from u without edge eid, until v's level is complete.
            for &t in &queue {
                dist[t] = u32::MAX;
            }
            queue.clear();
            dist[u] = 0;
            queue.push(u);
            let mut head = 0;
            // All of v's predecessors (one level up) are discovered by the time v is, so the
            // search stops at v's discovery.
            let mut found = u32::MAX;
            'bfs: while head < queue.len() {
                let x = queue[head];
                head += 1;
                if dist[x] as usize + 1 >= MAX_RING_SIZE {
                    break;
                }
                for &(y, e) in &adj[offs[x]..offs[x + 1]] {
                    if e == eid || dist[y] != u32::MAX {
                        continue;
                    }
                    dist[y] = dist[x] + 1;
                    queue.push(y);
                    if y == v {
                        found = dist[y];
                        break 'bfs;
                    }
                }
            }
            if found == u32::MAX {
                continue;
            }
            // Depth-first enumeration of all shortest v → u paths down the distance levels.
            path_atoms.clear();
            path_edges.clear();
            cursor.clear();
            path_atoms.push(v);
            cursor.push(offs[v]);
            let mut emitted = 0;
            while let Some(pos) = cursor.last_mut() {
                let x = *path_atoms
                    .last()
                    .expect("path and cursor have equal length");
                if dist[x] == 0 {
                    // Reached u: a cycle.
                    bonds_buf.clear();
                    bonds_buf.extend_from_slice(&path_edges);
                    bonds_buf.push(eid);
                    bonds_buf.sort_unstable();
                    if !out.iter().any(|c| c.bonds == bonds_buf) {
                        out.push(Cycle {
                            atoms: path_atoms.clone(),
                            bonds: bonds_buf.clone(),
                        });
                    }
                    emitted += 1;
                    cursor.pop();
                    path_atoms.pop();
                    path_edges.pop();
                    if emitted >= MAX_CYCLES_PER_BOND {
                        break;
                    }
                    continue;
                }
                if *pos >= offs[x + 1] {
                    cursor.pop();
                    path_atoms.pop();
                    path_edges.pop();
                    continue;
                }
                let (y, e) = adj[*pos];
                *pos += 1;
                if e != eid && dist[y] != u32::MAX && dist[y] + 1 == dist[x] {
                    path_atoms.push(y);
                    path_edges.push(e);
                    cursor.push(offs[y]);
                }
            }
        }
    }
    out.sort_by(|a, b| {
        a.bonds
            .len()
            .cmp(&b.bonds.len())
            .then(a.bonds.cmp(&b.bonds))
    });
    out
}
