//! Assembly of a candidate graph from a tuple: copy each fragment's atoms (without its
//! attachment dummies), then replace each pair of joined dummies by a single bond between their
//! anchors; free sites of the core get a hydrogen.

use crate::chem::mol::{AtomIdx, Bond, BondOrder, DoubleBondStereo, Molecule, StereoRef};
use crate::fragments::Library;
use crate::model::{Candidate, Link, Unit};

use super::enumerate::{Arm, Tuple};

/// A join: (unit, site index) to (unit, site index).
type Join = ((usize, usize), (usize, usize));

/// Build the candidate molecule of `t`.
///
/// Joining single bonds between separate fragments creates no ring, so ring membership and the
/// aromaticity flags of every fragment carry over unchanged and are not perceived again.
/// Stereo marks that referred to a dummy now refer to the atom that replaced it (or to the
/// implicit hydrogen of a capped site); a double-bond configuration referring to a capped
/// dummy is dropped.
pub fn assemble(lib: &Library, t: &Tuple) -> Candidate {
    // Units and joins.
    let mut unit_frag: Vec<usize> = vec![t.core];
    let mut joins: Vec<Join> = Vec::new();
    let mut caps: Vec<(usize, usize)> = Vec::new();
    for (site, arm) in t.arms.iter().enumerate() {
        match *arm {
            Arm::H => caps.push((0, site)),
            Arm::Terminal(f) => {
                unit_frag.push(f);
                joins.push(((0, site), (unit_frag.len() - 1, 0)));
            }
            Arm::Bridged {
                bridge,
                core_site,
                terminal,
            } => {
                unit_frag.push(bridge);
                let ub = unit_frag.len() - 1;
                unit_frag.push(terminal);
                let ut = unit_frag.len() - 1;
                joins.push(((0, site), (ub, core_site as usize)));
                joins.push(((ub, 1 - core_site as usize), (ut, 0)));
            }
        }
    }
    // Copy atoms and intra-fragment bonds, skipping dummies.
    let mut mol = Molecule::new();
    let mut maps: Vec<Vec<Option<AtomIdx>>> = Vec::with_capacity(unit_frag.len());
    let mut atom_unit = Vec::new();
    for (u, &fi) in unit_frag.iter().enumerate() {
        let fm = &lib.fragments[fi].mol;
        let mut map = vec![None; fm.atom_count()];
        for a in fm.atoms() {
            let atom = fm.atom(a);
            if atom.is_dummy() && atom.class > 0 {
                continue;
            }
            let mut copy = atom.clone();
            copy.stereo_refs.clear();
            map[a.index()] = Some(mol.add_atom(copy));
            atom_unit.push(u);
        }
        for e in fm.graph.edge_indices() {
            let (x, y) = fm.graph.edge_endpoints(e).expect("edge exists");
            if let (Some(nx), Some(ny)) = (map[x.index()], map[y.index()]) {
                let mut b = *fm.bond(e);
                b.stereo = None; // re-mapped below
                mol.add_bond(nx, ny, b);
            }
        }
        maps.push(map);
    }
    // Where each dummy went: the anchor of the joined partner, or None for a hydrogen cap.
    let site_of = |u: usize, s: usize| lib.fragments[unit_frag[u]].sites[s];
    let mut replaced: Vec<Vec<Option<AtomIdx>>> =
        maps.iter().map(|m| vec![None; m.len()]).collect();
    let mut links = Vec::with_capacity(joins.len());
    for &((u, s), (v, r)) in &joins {
        let (su, sv) = (site_of(u, s), site_of(v, r));
        let au = maps[u][su.anchor.index()].expect("anchors are kept");
        let av = maps[v][sv.anchor.index()].expect("anchors are kept");
        replaced[u][su.dummy.index()] = Some(av);
        replaced[v][sv.dummy.index()] = Some(au);
        let bond = mol.add_bond(au, av, Bond::new(BondOrder::Single));
        links.push(Link {
            bond,
            units: (u, v),
            twistable: true,
        });
    }
    for &(u, s) in &caps {
        let site = site_of(u, s);
        let a = maps[u][site.anchor.index()].expect("anchors are kept");
        mol.atom_mut(a).hydrogens += 1;
    }
    // Stereo references.
    for (u, &fi) in unit_frag.iter().enumerate() {
        let fm = &lib.fragments[fi].mol;
        let resolve = |x: AtomIdx| -> Option<StereoRef> {
            match maps[u][x.index()] {
                Some(n) => Some(StereoRef::Atom(n)),
                None => replaced[u][x.index()].map(StereoRef::Atom),
            }
        };
        for a in fm.atoms() {
            let atom = fm.atom(a);
            let Some(na) = maps[u][a.index()] else {
                continue;
            };
            if atom.chirality.is_some() {
                let refs: Vec<StereoRef> = atom
                    .stereo_refs
                    .iter()
                    .map(|r| match *r {
                        StereoRef::ImplicitH => StereoRef::ImplicitH,
                        StereoRef::Atom(x) => resolve(x).unwrap_or(StereoRef::ImplicitH),
                    })
                    .collect();
                mol.atom_mut(na).stereo_refs = refs;
            }
        }
        for e in fm.graph.edge_indices() {
            let Some(st) = fm.bond(e).stereo else {
                continue;
            };
            let (x, y) = fm.graph.edge_endpoints(e).expect("edge exists");
            let (Some(nx), Some(ny)) = (maps[u][x.index()], maps[u][y.index()]) else {
                continue;
            };
            let (Some(StereoRef::Atom(ra)), Some(StereoRef::Atom(rb))) =
                (resolve(st.a), resolve(st.b))
            else {
                continue;
            };
            if let Some(ne) = mol.bond_between(nx, ny) {
                // Keep the a/b sides aligned with the new edge's endpoint order.
                let (s, _) = mol.graph.edge_endpoints(ne).expect("edge exists");
                let (a, b) = if s == nx { (ra, rb) } else { (rb, ra) };
                mol.graph[ne].stereo = Some(DoubleBondStereo {
                    a,
                    b,
                    trans: st.trans,
                });
            }
        }
    }
    let units = unit_frag
        .iter()
        .map(|&fi| Unit {
            fragment_id: lib.fragments[fi].id.clone(),
            role: lib.fragments[fi].role,
        })
        .collect();
    Candidate {
        mol,
        atom_unit,
        units,
        links,
        provenance: t.provenance(lib),
    }
}
