//! 2D layout of a molecule graph and its lift to 3D.
//!
//! Algorithm (our own statement of the usual depiction approach):
//! 1. Rings: a smallest set of smallest rings chosen greedily from the shortest cycles through
//!    each ring bond (`chem::rings`), smallest first, each adding a new bond. Rings sharing atoms
//!    form ring systems.
//! 2. The largest ring system is placed first; each ring is a regular polygon whose side is the
//!    mean ideal length of its bonds. A ring fused on an edge is built on the side of that edge
//!    away from the ring already there; a spiro ring opposite its neighbour's centre.
//! 3. From placed atoms the rest grows breadth-first: one substituent on a ring atom goes along
//!    the exterior bisector; chain atoms continue at 120° (sp2/sp3, zig-zag) or 180° (sp); a
//!    substituent that begins a ring system carries that system with its centre straight ahead.
//! 4. 3D: everything lies in z = 0 except (a) the two substituents of an sp3 atom that sits in a
//!    ring with its other two bonds (acridan C9, silicon centres, cyclic sulfones): above and
//!    below the ring plane at the tetrahedral angle; (b) the substituents of acyclic
//!    four-coordinate centres (tert-butyl, sulfone and phosphine-oxide links): tetrahedral about
//!    the bond to the larger part of the molecule; (c) spiro centres: the smaller ring system is
//!    turned perpendicular to the other. Hydrogens are added on request with standard
//!    trigonal/tetrahedral directions.

use std::collections::VecDeque;

use crate::chem::{AtomIdx, Bond, BondOrder, Molecule, rings};

use super::lengths::ideal_length;
use super::{Point, add, cross, dist, dot, norm, scale, sub, unit};

/// Coordinates (Å), indexed by atom index of the molecule they were made for.
#[derive(Debug, Clone, PartialEq)]
pub struct Coordinates {
    pub points: Vec<Point>,
}

fn bond_len(mol: &Molecule, a: usize, b: usize, bond: &Bond) -> f64 {
    let (x, y) = (mol.atom(AtomIdx::new(a)), mol.atom(AtomIdx::new(b)));
    ideal_length(x.element, y.element, bond, x.aromatic, y.aromatic)
}

/// Choose ring basis cycles: smallest first, each adding at least one new bond.
fn ring_basis(mol: &Molecule) -> Vec<Vec<usize>> {
    let ring_bond = rings::ring_bonds(mol);
    let all = vec![true; mol.atom_count()];
    let cycles = rings::shortest_cycles(mol, &all, &ring_bond);
    let mut covered = vec![false; mol.bond_count()];
    let mut out = Vec::new();
    for c in cycles {
        if c.bonds.iter().any(|&b| !covered[b]) {
            for &b in &c.bonds {
                covered[b] = true;
            }
            out.push(c.atoms);
        }
    }
    out
}

fn rotate2d(v: Point, ang: f64) -> Point {
    let (s, c) = ang.sin_cos();
    [v[0] * c - v[1] * s, v[0] * s + v[1] * c, 0.0]
}

struct Layout<'a> {
    mol: &'a Molecule,
    rings: Vec<Vec<usize>>,
    /// Rings each atom belongs to.
    atom_rings: Vec<Vec<usize>>,
    pos: Vec<Option<Point>>,
    ring_placed: Vec<bool>,
    queue: VecDeque<usize>,
}

impl<'a> Layout<'a> {
    fn ring_side(&self, r: usize) -> f64 {
        let ring = &self.rings[r];
        let n = ring.len();
        let mut s = 0.0;
        for k in 0..n {
            let (a, b) = (ring[k], ring[(k + 1) % n]);
            let e = self
                .mol
                .bond_between(AtomIdx::new(a), AtomIdx::new(b))
                .expect("ring bond");
            s += bond_len(self.mol, a, b, self.mol.bond(e));
        }
        s / n as f64
    }

    fn set(&mut self, a: usize, p: Point) {
        if self.pos[a].is_none() {
            self.pos[a] = Some(p);
            self.queue.push_back(a);
        }
    }

    /// Place ring r as a regular polygon around centre `c`, atom `start` (already placed or at
    /// `start_pos`) first, going round in the direction that puts ring-next `next` at angle +step
    /// when `ccw`.
    fn place_ring_polygon(
        &mut self,
        r: usize,
        c: Point,
        start_idx: usize,
        start_pos: Point,
        ccw: bool,
    ) {
        let ring = self.rings[r].clone();
        let n = ring.len();
        let rad = dist(start_pos, c);
        let phi0 = (start_pos[1] - c[1]).atan2(start_pos[0] - c[0]);
        let step = 2.0 * std::f64::consts::PI / n as f64 * if ccw { 1.0 } else { -1.0 };
        for k in 0..n {
            let a = ring[(start_idx + k) % n];
            let phi = phi0 + step * k as f64;
            self.set(a, [c[0] + rad * phi.cos(), c[1] + rad * phi.sin(), 0.0]);
        }
        self.ring_placed[r] = true;
    }

    fn centroid_of_ring(&self, r: usize) -> Option<Point> {
        let ring = &self.rings[r];
        let mut s = [0.0; 3];
        for &a in ring {
            s = add(s, self.pos[a]?);
        }
        Some(scale(s, 1.0 / ring.len() as f64))
    }

    /// Place every unplaced ring that shares atoms with placed rings (fused or spiro), until none
    /// is left in reach.
    fn grow_rings(&mut self) {
        loop {
            let mut progressed = false;
            for r in 0..self.rings.len() {
                if self.ring_placed[r] {
                    continue;
                }
                let ring = self.rings[r].clone();
                let n = ring.len();
                let placed: Vec<usize> = (0..n).filter(|&k| self.pos[ring[k]].is_some()).collect();
                if placed.is_empty() {
                    continue;
                }
                let side = self.ring_side(r);
                let rad = side / (2.0 * (std::f64::consts::PI / n as f64).sin());
                // A placed edge of this ring?
                let edge = (0..n).find(|&k| {
                    self.pos[ring[k]].is_some() && self.pos[ring[(k + 1) % n]].is_some()
                });
                if let Some(k) = edge {
                    let (u, v) = (ring[k], ring[(k + 1) % n]);
                    let (pu, pv) = (self.pos[u].unwrap(), self.pos[v].unwrap());
                    // The placed neighbour ring on this edge: its centre tells which side is taken.
                    let other = self.atom_rings[u]
                        .iter()
                        .copied()
                        .find(|&o| o != r && self.ring_placed[o] && self.rings[o].contains(&v));
                    let m = scale(add(pu, pv), 0.5);
                    let along = unit(sub(pv, pu));
                    let mut normal = [-along[1], along[0], 0.0];
                    if let Some(o) = other
                        && let Some(co) = self.centroid_of_ring(o)
                        && dot(sub(co, m), normal) > 0.0
                    {
                        normal = scale(normal, -1.0);
                    }
                    let edge_len = dist(pu, pv);
                    let r_eff = (edge_len / 2.0) / (std::f64::consts::PI / n as f64).sin();
                    let apothem = (r_eff * r_eff - (edge_len / 2.0).powi(2)).max(0.0).sqrt();
                    let c = add(m, scale(normal, apothem));
                    // Direction u → v around c.
                    let cu = sub(pu, c);
                    let cv = sub(pv, c);
                    let ccw = cross(cu, cv)[2] > 0.0;
                    self.place_ring_polygon(r, c, k, pu, ccw);
                } else {
                    // Spiro (or bridged): one shared atom; centre opposite the other ring's centre.
                    let k = placed[0];
                    let a = ring[k];
                    let pa = self.pos[a].unwrap();
                    let away = self.atom_rings[a]
                        .iter()
                        .copied()
                        .filter(|&o| o != r && self.ring_placed[o])
                        .filter_map(|o| self.centroid_of_ring(o))
                        .map(|co| unit(sub(pa, co)))
                        .next()
                        .unwrap_or([1.0, 0.0, 0.0]);
                    let c = add(pa, scale(away, rad));
                    self.place_ring_polygon(r, c, k, pa, true);
                }
                progressed = true;
            }
            if !progressed {
                return;
            }
        }
    }

    /// Unit directions from atom a to its placed neighbours.
    fn used_dirs(&self, a: usize) -> Vec<Point> {
        let pa = self.pos[a].unwrap();
        self.mol
            .neighbours(AtomIdx::new(a))
            .filter_map(|(b, _)| self.pos[b.index()].map(|pb| unit(sub(pb, pa))))
            .collect()
    }

    fn is_linear(&self, a: usize) -> bool {
        let mut doubles = 0;
        for (_, e) in self.mol.neighbours(AtomIdx::new(a)) {
            match self.mol.bond(e).order {
                BondOrder::Triple => return true,
                BondOrder::Double => doubles += 1,
                _ => {}
            }
        }
        doubles >= 2
    }

    /// Place the unplaced neighbours of a placed atom.
    fn expand(&mut self, a: usize) {
        let pa = self.pos[a].unwrap();
        let todo: Vec<(usize, petgraph::graph::EdgeIndex)> = self
            .mol
            .neighbours(AtomIdx::new(a))
            .filter(|(b, _)| self.pos[b.index()].is_none())
            .map(|(b, e)| (b.index(), e))
            .collect();
        if todo.is_empty() {
            return;
        }
        let used = self.used_dirs(a);
        let k = todo.len();
        let dirs: Vec<Point> = match used.len() {
            0 => (0..k)
                .map(|i| {
                    rotate2d(
                        [1.0, 0.0, 0.0],
                        2.0 * std::f64::consts::PI * i as f64 / k as f64,
                    )
                })
                .collect(),
            1 => {
                let back = used[0];
                if self.is_linear(a) {
                    vec![scale(back, -1.0); k]
                } else {
                    // Zig-zag: first substituent on the side away from the grandparent atoms.
                    let plus = rotate2d(back, 2.0 * std::f64::consts::PI / 3.0);
                    let minus = rotate2d(back, -2.0 * std::f64::consts::PI / 3.0);
                    let crowd = |d: Point| -> f64 {
                        let p = add(pa, scale(d, 1.4));
                        self.pos
                            .iter()
                            .flatten()
                            .map(|q| 1.0 / (dist(p, *q) + 0.1))
                            .sum()
                    };
                    let (first, second) = if crowd(plus) <= crowd(minus) {
                        (plus, minus)
                    } else {
                        (minus, plus)
                    };
                    match k {
                        1 => vec![first],
                        2 => vec![first, second],
                        _ => (0..k)
                            .map(|i| {
                                rotate2d(
                                    back,
                                    2.0 * std::f64::consts::PI * (i + 1) as f64 / (k + 1) as f64,
                                )
                            })
                            .collect(),
                    }
                }
            }
            _ => {
                let s = used.iter().fold([0.0; 3], |acc, d| add(acc, *d));
                let bis = if norm(s) < 1e-6 {
                    rotate2d(used[0], std::f64::consts::FRAC_PI_2)
                } else {
                    unit(scale(s, -1.0))
                };
                match k {
                    1 => vec![bis],
                    _ => (0..k)
                        .map(|i| {
                            let spread = std::f64::consts::PI / 6.0;
                            let off = spread * (i as f64 - (k - 1) as f64 / 2.0) * 2.0
                                / (k - 1).max(1) as f64;
                            rotate2d(bis, off)
                        })
                        .collect(),
                }
            }
        };
        for ((b, e), d) in todo.into_iter().zip(dirs) {
            if self.pos[b].is_some() {
                continue;
            }
            let len = bond_len(self.mol, a, b, self.mol.bond(e));
            let pb = add(pa, scale(d, len));
            self.set(b, pb);
            // A substituent that starts a ring system: place its first ring straight ahead.
            if let Some(&r) = self.atom_rings[b].iter().find(|&&r| !self.ring_placed[r]) {
                let ring = self.rings[r].clone();
                let n = ring.len();
                let side = self.ring_side(r);
                let rad = side / (2.0 * (std::f64::consts::PI / n as f64).sin());
                let c = add(pb, scale(d, rad));
                let idx = ring.iter().position(|&x| x == b).expect("atom in its ring");
                self.place_ring_polygon(r, c, idx, pb, true);
                self.grow_rings();
            }
        }
    }
}

/// 2D layout lifted to 3D (see the module documentation).
///
/// The layout is made on a copy of the molecule renumbered in canonical order (ring choice,
/// seed ring and growth order all follow canonical ranks), so the internal geometry, and every
/// energy computed from it, does not depend on how the input numbered its atoms.
pub fn layout(mol: &Molecule) -> Coordinates {
    let ranks = crate::chem::canon::canonical_ranks(mol).ranks;
    let n = mol.atom_count();
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by_key(|&a| ranks[a]);
    let mut new_of = vec![0usize; n];
    for (k, &a) in order.iter().enumerate() {
        new_of[a] = k;
    }
    let mut m = Molecule::new();
    for &a in &order {
        let mut atom = mol.atom(AtomIdx::new(a)).clone();
        atom.stereo_refs.clear();
        m.add_atom(atom);
    }
    let mut edges: Vec<(usize, usize, Bond)> = mol
        .graph
        .edge_indices()
        .map(|e| {
            let (x, y) = mol.graph.edge_endpoints(e).expect("edge exists");
            let (p, q) = (new_of[x.index()], new_of[y.index()]);
            (p.min(q), p.max(q), *mol.bond(e))
        })
        .collect();
    edges.sort_by_key(|&(p, q, _)| (p, q));
    for (p, q, b) in edges {
        m.add_bond(AtomIdx::new(p), AtomIdx::new(q), b);
    }
    let c = layout_in_order(&m);
    Coordinates {
        points: (0..n).map(|a| c.points[new_of[a]]).collect(),
    }
}

fn layout_in_order(mol: &Molecule) -> Coordinates {
    let n = mol.atom_count();
    let rings = ring_basis(mol);
    let mut atom_rings = vec![Vec::new(); n];
    for (r, ring) in rings.iter().enumerate() {
        for &a in ring {
            atom_rings[a].push(r);
        }
    }
    let mut l = Layout {
        mol,
        ring_placed: vec![false; rings.len()],
        rings,
        atom_rings,
        pos: vec![None; n],
        queue: VecDeque::new(),
    };
    let mut origin_x = 0.0;
    loop {
        // Seed each component: its largest ring, else its highest-degree atom.
        let unplaced: Vec<usize> = (0..n).filter(|&a| l.pos[a].is_none()).collect();
        if unplaced.is_empty() {
            break;
        }
        let seed_ring = (0..l.rings.len())
            .filter(|&r| !l.ring_placed[r])
            .max_by_key(|&r| (l.rings[r].len(), std::cmp::Reverse(r)));
        if let Some(r) = seed_ring {
            let nring = l.rings[r].len();
            let side = l.ring_side(r);
            let rad = side / (2.0 * (std::f64::consts::PI / nring as f64).sin());
            let c = [origin_x, 0.0, 0.0];
            l.place_ring_polygon(r, c, 0, [origin_x + rad, 0.0, 0.0], true);
            l.grow_rings();
        } else {
            let a = unplaced[0];
            l.set(a, [origin_x, 0.0, 0.0]);
        }
        while let Some(a) = l.queue.pop_front() {
            l.expand(a);
        }
        let max_x = l
            .pos
            .iter()
            .flatten()
            .map(|p| p[0])
            .fold(f64::NEG_INFINITY, f64::max);
        origin_x = max_x + 5.0;
    }
    let mut points: Vec<Point> = l.pos.into_iter().map(|p| p.unwrap_or([0.0; 3])).collect();
    lift_sp3(mol, &mut points);
    tetrahedral_acyclic(mol, &mut points);
    spiro_perpendicular(mol, &mut points);
    relieve_rotors(mol, &mut points);
    Coordinates { points }
}

/// Rotors at four-coordinate centres (the phenyls of a 9,9-diphenylacridan or a
/// diphenylphosphoryl group, tert-butyl groups): each non-ring single bond from such a centre to
/// a neighbour with further heavy neighbours is turned, smaller side moving, to the angle of
/// least steric repulsion on a 15° grid (`steric::side_repulsion`, hydrogens included); two
/// sweeps. π links between ring systems are left to the torsion model.
fn relieve_rotors(mol: &Molecule, points: &mut [Point]) {
    let ring = rings::ring_bonds(mol);
    let heavy_deg = |a: usize| {
        mol.neighbours(AtomIdx::new(a))
            .filter(|(b, _)| mol.atom(*b).element != 1)
            .count()
    };
    let mut rotors = Vec::new();
    for e in mol.graph.edge_indices() {
        if ring[e.index()] || mol.bond(e).order != BondOrder::Single {
            continue;
        }
        let (x, y) = mol.graph.edge_endpoints(e).expect("edge exists");
        let (x, y) = (x.index(), y.index());
        if !(tetra_centre(mol, AtomIdx::new(x)) || tetra_centre(mol, AtomIdx::new(y))) {
            continue;
        }
        if heavy_deg(x) < 2 || heavy_deg(y) < 2 {
            continue;
        }
        // Rotate the smaller side.
        let (sx, sy) = (branch(mol, y, x).len(), branch(mol, x, y).len());
        rotors.push(if sy <= sx { (x, y) } else { (y, x) });
    }
    if rotors.is_empty() {
        return;
    }
    // The hydrogen topology and each rotor's moving side do not change with the angles: built
    // once; each trial recomputes only the coordinates.
    let (mh, _) = with_hydrogens(
        mol,
        &Coordinates {
            points: points.to_vec(),
        },
    );
    let sides: Vec<Vec<bool>> = rotors
        .iter()
        .map(|&(a, b)| {
            let mut side = vec![false; mh.atom_count()];
            for x in branch(&mh, a, b) {
                side[x] = true;
            }
            side
        })
        .collect();
    for _ in 0..2 {
        for (&(a, b), side) in rotors.iter().zip(&sides) {
            let base = Coordinates {
                points: points.to_vec(),
            };
            let mut best = (f64::INFINITY, 0.0);
            for k in 0..24 {
                let ang = (k as f64 * 15.0).to_radians();
                let mut trial = base.clone();
                rotate_about_bond(mol, &mut trial.points, a, b, ang);
                let ch = hydrogen_coordinates(mol, &trial);
                let e = super::steric::side_repulsion(&mh, &ch, side);
                if e < best.0 - 1e-9 {
                    best = (e, ang);
                }
            }
            rotate_about_bond(mol, points, a, b, best.1);
        }
    }
}

/// Turn the branch that starts at `s` (seen from its neighbour `a`) rigidly about `a` so that
/// the bond a→s points along the unit vector `dir`: the branch keeps its shape and its
/// orientation relative to the bond (a translation would leave a ring pointing the old way).
fn swing_branch(mol: &Molecule, points: &mut [Point], a: usize, s: usize, dir: Point) {
    let pa = points[a];
    let from = unit(sub(points[s], pa));
    let to = unit(dir);
    let axis = cross(from, to);
    let sin = norm(axis);
    let cos = dot(from, to);
    let side = branch(mol, a, s);
    if sin < 1e-9 {
        if cos > 0.0 {
            return;
        }
        // Opposite: half turn about any perpendicular axis.
        let mut p = cross(from, [0.0, 0.0, 1.0]);
        if norm(p) < 1e-6 {
            p = cross(from, [0.0, 1.0, 0.0]);
        }
        let k = unit(p);
        for &x in &side {
            let v = sub(points[x], pa);
            points[x] = add(pa, sub(scale(k, 2.0 * dot(k, v)), v));
        }
        return;
    }
    rotate_atoms(points, &side, pa, scale(axis, 1.0 / sin), sin, cos);
}

/// Rotate the atoms `side` about the unit axis `k` through `origin` by the angle whose sine
/// and cosine are given (Rodrigues' rotation formula).
fn rotate_atoms(points: &mut [Point], side: &[usize], origin: Point, k: Point, sin: f64, cos: f64) {
    for &x in side {
        let v = sub(points[x], origin);
        let r = add(
            add(scale(v, cos), scale(cross(k, v), sin)),
            scale(k, dot(k, v) * (1.0 - cos)),
        );
        points[x] = add(origin, r);
    }
}

/// Is atom `a` a four-coordinate σ centre (sp3 carbon or silicon, sulfone/sulfoxide S,
/// phosphine-oxide P, quaternary centres): four neighbours counting hydrogens, not aromatic,
/// single bonds except double bonds to terminal O or S.
fn tetra_centre(mol: &Molecule, a: AtomIdx) -> bool {
    let at = mol.atom(a);
    if at.aromatic || mol.degree(a) + at.hydrogens as usize != 4 {
        return false;
    }
    mol.neighbours(a).all(|(b, e)| match mol.bond(e).order {
        BondOrder::Single => true,
        BondOrder::Double => {
            matches!(at.element, 15 | 16)
                && matches!(mol.atom(b).element, 8 | 16)
                && mol.degree(b) == 1
        }
        _ => false,
    })
}

/// Acyclic four-coordinate centres (tert-butyl carbons, sulfone S between two aryls, P=O): the
/// 2D layout puts their substituents in the plane at 120°, where they meet ring atoms three
/// bonds away. Each substituent branch (all but the neighbour holding the largest part of the
/// molecule) is moved rigidly to a tetrahedral direction: one in the plane of the parent bond
/// and the first substituent, two above and below.
fn tetrahedral_acyclic(mol: &Molecule, points: &mut [Point]) {
    let ring = rings::ring_bonds(mol);
    let ring_atom = rings::ring_atoms(mol, &ring);
    let cos_t = (109.47f64).to_radians().cos();
    let sin_t = (109.47f64).to_radians().sin();
    for a in mol.atoms() {
        if ring_atom[a.index()] || !tetra_centre(mol, a) || mol.degree(a) < 2 {
            continue;
        }
        let nb: Vec<usize> = mol.neighbours(a).map(|(b, _)| b.index()).collect();
        let sizes: Vec<usize> = nb
            .iter()
            .map(|&b| branch(mol, a.index(), b).len())
            .collect();
        let parent_k = (0..nb.len())
            .max_by_key(|&k| (sizes[k], std::cmp::Reverse(nb[k])))
            .expect("degree >= 2");
        let parent = nb[parent_k];
        let pa = points[a.index()];
        let u = unit(sub(points[parent], pa));
        let others: Vec<usize> = nb.iter().copied().filter(|&b| b != parent).collect();
        // In-plane reference perpendicular to u, from the first substituent's direction.
        let first = sub(points[others[0]], pa);
        let mut w = sub(first, scale(u, dot(first, u)));
        if norm(w) < 1e-6 {
            w = cross(u, [0.0, 0.0, 1.0]);
            if norm(w) < 1e-6 {
                w = cross(u, [0.0, 1.0, 0.0]);
            }
        }
        let w = unit(w);
        let v = unit(cross(u, w));
        for (k, &s) in others.iter().enumerate() {
            let phi = (k as f64) * 2.0 * std::f64::consts::PI / 3.0;
            let d = add(
                scale(u, cos_t),
                scale(add(scale(w, phi.cos()), scale(v, phi.sin())), sin_t),
            );
            swing_branch(mol, points, a.index(), s, d);
        }
    }
}

/// Spiro centres (one atom shared by two ring systems): the layout puts both systems in one
/// plane; the smaller side is turned by 90° about the axis from the spiro atom through the
/// bisector of its two bonds into that side, so the two ring planes end up perpendicular.
fn spiro_perpendicular(mol: &Molecule, points: &mut [Point]) {
    let ring = rings::ring_bonds(mol);
    for a in mol.atoms() {
        let rb: Vec<usize> = mol
            .neighbours(a)
            .filter(|(_, e)| ring[e.index()])
            .map(|(b, _)| b.index())
            .collect();
        if rb.len() != 4 || mol.atom(a).aromatic {
            continue;
        }
        // Group the four ring neighbours by which can reach which without passing through a.
        let side_of = |start: usize| branch(mol, a.index(), start);
        let s0 = side_of(rb[0]);
        let partner: Vec<usize> = rb[1..].iter().copied().filter(|b| s0.contains(b)).collect();
        if partner.len() != 1 {
            continue; // fused through a, not spiro
        }
        let other: Vec<usize> = rb[1..]
            .iter()
            .copied()
            .filter(|&b| b != partner[0])
            .collect();
        let s1 = side_of(other[0]);
        if s1.iter().any(|x| s0.contains(x)) {
            continue;
        }
        let (side, ends) = if s0.len() <= s1.len() {
            (s0, [rb[0], partner[0]])
        } else {
            (s1, [other[0], other[1]])
        };
        let pa = points[a.index()];
        let k = unit(add(
            unit(sub(points[ends[0]], pa)),
            unit(sub(points[ends[1]], pa)),
        ));
        let (s, c) = (std::f64::consts::FRAC_PI_2).sin_cos();
        rotate_atoms(points, &side, pa, k, s, c);
    }
}

/// Move the two non-ring substituents of an sp3 ring atom (two ring bonds, four single bonds)
/// above and below the plane, at the tetrahedral half-angle from the exterior bisector.
fn lift_sp3(mol: &Molecule, points: &mut [Point]) {
    let ring_bond = rings::ring_bonds(mol);
    let half = (109.47f64 / 2.0).to_radians();
    for a in mol.atoms() {
        let nb: Vec<(usize, usize)> = mol
            .neighbours(a)
            .map(|(b, e)| (b.index(), e.index()))
            .collect();
        if nb.len() != 4 || !tetra_centre(mol, a) {
            continue;
        }
        let in_ring: Vec<usize> = nb
            .iter()
            .filter(|(_, e)| ring_bond[*e])
            .map(|(b, _)| *b)
            .collect();
        let subs: Vec<usize> = nb
            .iter()
            .filter(|(_, e)| !ring_bond[*e])
            .map(|(b, _)| *b)
            .collect();
        if in_ring.len() != 2 || subs.len() != 2 {
            continue;
        }
        let pa = points[a.index()];
        let u0 = unit(sub(points[in_ring[0]], pa));
        let u1 = unit(sub(points[in_ring[1]], pa));
        let bis = unit(scale(add(u0, u1), -1.0));
        let normal = unit(cross(u0, u1));
        for (k, &s) in subs.iter().enumerate() {
            let sign = if k == 0 { 1.0 } else { -1.0 };
            let d = add(scale(bis, half.cos()), scale(normal, sign * half.sin()));
            swing_branch(mol, points, a.index(), s, d);
        }
    }
}

/// Atoms reachable from `start` without passing through `from` (a branch of a bridge bond).
pub fn branch(mol: &Molecule, from: usize, start: usize) -> Vec<usize> {
    let mut seen = vec![false; mol.atom_count()];
    seen[from] = true;
    seen[start] = true;
    let mut stack = vec![start];
    let mut out = vec![start];
    while let Some(x) = stack.pop() {
        for (y, _) in mol.neighbours(AtomIdx::new(x)) {
            if !seen[y.index()] {
                seen[y.index()] = true;
                stack.push(y.index());
                out.push(y.index());
            }
        }
    }
    out
}

/// Is bond (a, b) on a ring: can b reach a without that bond?
fn on_ring(mol: &Molecule, a: usize, b: usize) -> bool {
    let mut seen = vec![false; mol.atom_count()];
    seen[b] = true;
    let mut stack = vec![b];
    while let Some(x) = stack.pop() {
        for (y, _) in mol.neighbours(AtomIdx::new(x)) {
            let y = y.index();
            if x == b && y == a {
                continue;
            }
            if y == a {
                return true;
            }
            if !seen[y] {
                seen[y] = true;
                stack.push(y);
            }
        }
    }
    false
}

/// Rotate the side of bond (a, b) that holds `b` by `angle` (radians) about the a–b axis.
/// Returns false (and changes nothing) when the bond is on a ring (the sides are not separate).
pub fn rotate_about_bond(
    mol: &Molecule,
    points: &mut [Point],
    a: usize,
    b: usize,
    angle: f64,
) -> bool {
    if mol.bond_between(AtomIdx::new(a), AtomIdx::new(b)).is_none() || on_ring(mol, a, b) {
        return false;
    }
    let side = branch(mol, a, b);
    let origin = points[a];
    let k = unit(sub(points[b], origin));
    let (s, c) = angle.sin_cos();
    rotate_atoms(points, &side, origin, k, s, c);
    true
}

/// The molecule with its implicit hydrogens made explicit atoms, and coordinates for all atoms:
/// trigonal in the local plane at sp2 atoms, tetrahedral at sp3 atoms, linear at sp atoms.
pub fn with_hydrogens(mol: &Molecule, coords: &Coordinates) -> (Molecule, Coordinates) {
    let mut m = mol.clone();
    let mut pts = coords.points.clone();
    place_hydrogens(mol, coords, |a, p| {
        let hidx = m.add_atom(crate::chem::Atom::new(1));
        m.add_bond(a, hidx, Bond::new(BondOrder::Single));
        pts.push(p);
    });
    for a in mol.atoms() {
        m.atom_mut(a).hydrogens = 0;
    }
    (m, Coordinates { points: pts })
}

/// The coordinates of [`with_hydrogens`] alone, for a molecule whose hydrogen topology is
/// already built (the explicit hydrogens come in the same order: one call of `with_hydrogens`
/// gives the molecule, this the coordinates of each further conformation).
pub fn hydrogen_coordinates(mol: &Molecule, coords: &Coordinates) -> Coordinates {
    let mut pts = coords.points.clone();
    place_hydrogens(mol, coords, |_, p| pts.push(p));
    Coordinates { points: pts }
}

/// The position of every implicit hydrogen of `mol`, passed with its parent atom to `put`,
/// atom by atom in index order (the order of the explicit hydrogens of [`with_hydrogens`]).
/// How many hydrogens an atom gets depends on the graph only, never on the coordinates.
fn place_hydrogens(mol: &Molecule, coords: &Coordinates, mut put: impl FnMut(AtomIdx, Point)) {
    let tet = 109.47f64.to_radians();
    for a in mol.atoms() {
        let h = mol.atom(a).hydrogens as usize;
        if h == 0 {
            continue;
        }
        let pa = coords.points[a.index()];
        let nbrs: Vec<usize> = mol.neighbours(a).map(|(b, _)| b.index()).collect();
        let e: Vec<Point> = nbrs
            .iter()
            .map(|&b| unit(sub(coords.points[b], pa)))
            .collect();
        let sp2 = mol.atom(a).aromatic
            || mol
                .neighbours(a)
                .any(|(_, bd)| mol.bond(bd).order == BondOrder::Double);
        let sp = mol
            .neighbours(a)
            .any(|(_, bd)| mol.bond(bd).order == BondOrder::Triple);
        let mut dirs: Vec<Point> = Vec::new();
        match e.len() {
            0 => {
                let base = [
                    [1.0, 0.0, 0.0],
                    [-1.0 / 3.0, 0.9428, 0.0],
                    [-1.0 / 3.0, -0.4714, 0.8165],
                    [-1.0 / 3.0, -0.4714, -0.8165],
                ];
                dirs.extend(base.iter().take(h));
            }
            1 => {
                let e0 = e[0];
                // A reference perpendicular from a second neighbour of the neighbour.
                let nb = nbrs[0];
                let refp = mol
                    .neighbours(AtomIdx::new(nb))
                    .map(|(x, _)| x.index())
                    .find(|&x| x != a.index())
                    .map(|x| sub(coords.points[x], coords.points[nb]))
                    .unwrap_or([0.0, 0.0, 1.0]);
                let mut perp = sub(refp, scale(e0, dot(refp, e0)));
                if norm(perp) < 1e-6 {
                    perp = if e0[2].abs() < 0.9 {
                        cross(e0, [0.0, 0.0, 1.0])
                    } else {
                        cross(e0, [1.0, 0.0, 0.0])
                    };
                }
                let p1 = unit(perp);
                let p2 = unit(cross(e0, p1));
                if sp {
                    dirs.push(scale(e0, -1.0));
                } else if sp2 {
                    let ang = 120f64.to_radians();
                    for k in 0..h {
                        let sgn = if k == 0 { -1.0 } else { 1.0 };
                        dirs.push(add(scale(e0, ang.cos()), scale(p1, sgn * ang.sin())));
                    }
                } else {
                    // On an sp2/aromatic parent (N-methyl, aryl-methyl) one H stands
                    // perpendicular to the parent's plane and none lies in it, so none points
                    // at a peri or ortho hydrogen; elsewhere staggered against the reference.
                    // (an amine N with an aromatic neighbour is planar too: its lone pair
                    // conjugates)
                    let pn = AtomIdx::new(nb);
                    let parent_sp2 = mol.atom(pn).aromatic
                        || mol
                            .neighbours(pn)
                            .any(|(_, bd)| mol.bond(bd).order == BondOrder::Double)
                        || (mol.atom(pn).element == 7
                            && mol.neighbours(pn).any(|(x, _)| mol.atom(x).aromatic));
                    let start = if parent_sp2 && h == 3 {
                        std::f64::consts::FRAC_PI_2
                    } else {
                        std::f64::consts::PI
                    };
                    for k in 0..h {
                        let phi = start + 2.0 * std::f64::consts::PI * k as f64 / 3.0;
                        let q = add(scale(p1, phi.cos()), scale(p2, phi.sin()));
                        dirs.push(add(scale(e0, tet.cos()), scale(q, tet.sin())));
                    }
                }
            }
            2 => {
                let bis = unit(scale(add(e[0], e[1]), -1.0));
                if h == 1 || sp2 {
                    dirs.push(bis);
                } else {
                    let normal = unit(cross(e[0], e[1]));
                    let half = (tet / 2.0).max(0.0);
                    for k in 0..h.min(2) {
                        let sgn = if k == 0 { 1.0 } else { -1.0 };
                        dirs.push(add(scale(bis, half.cos()), scale(normal, sgn * half.sin())));
                    }
                }
            }
            _ => {
                let s = e.iter().fold([0.0; 3], |acc, d| add(acc, *d));
                dirs.push(unit(scale(s, -1.0)));
            }
        }
        let z = mol.atom(a).element;
        let len = match z {
            6 => 1.08,
            7 => 1.01,
            8 => 0.97,
            // Other X–H: sum of covalent radii, rounded (Cordero et al. 2008, from memory).
            _ => 1.1,
        };
        for d in dirs.into_iter().take(h) {
            put(a, add(pa, scale(unit(d), len)));
        }
    }
}
