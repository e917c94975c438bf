//! One molecule in depth: units, torsion of every link, states at the equilibrium twists with
//! their characters, and torsion-averaged S1, T1, ΔEST and f.
//!
//! Units: the molecule is cut at every single, non-ring bond between two ring atoms (the bonds
//! between ring systems, which twist); chains stay with the ring system they hang on. Each
//! unit's role comes from its own π calculation (capped with hydrogen): the unit with the
//! highest HOMO is the donor, the one with the lowest LUMO the acceptor.
//!
//! Torsion: each link is scanned from 0° to 180° in `scan_step_deg` steps with the other links
//! planar (`pi::torsion`); the equilibrium geometry puts every link at its minimum. Averaging
//! scheme (stated approximation): each link in turn is moved over its scan with the others at
//! equilibrium and the properties are Boltzmann-averaged over that link's weights; with several
//! links the per-link averages are combined with equal weight. Rates that depend exponentially
//! on gaps must be averaged per angle downstream, never computed from these averages.

use serde::Serialize;

use crate::chem::{AtomIdx, Molecule, rings};
use crate::geometry::{Coordinates, layout, rotate_about_bond};

use super::analysis::characterise;
use super::build::{BuiltModel, build_model};
use super::params::PppParams;
use super::torsion::{can_interpolate, profile, raw_scan_with};
use super::typing::{PiSite, PiTyping, perceive};
use super::{CisParams, Corrections, Multiplicity, PiError, ScfParams, ScfResult, cis, scf};

/// Settings of an estimate.
#[derive(Debug, Clone, PartialEq)]
pub struct EstimateParams {
    pub temperature_k: f64,
    /// Fix every link at this twist (degrees) instead of the torsion model.
    pub twist_deg: Option<f64>,
    pub scan_step_deg: f64,
    /// States kept per multiplicity.
    pub n_states: usize,
    /// CT number at or above which a state is labelled CT, at or below which LE.
    pub ct_threshold: f64,
    pub le_threshold: f64,
    /// CIS active space: occupied orbitals from the HOMO down and virtuals from the LUMO up
    /// (None = all, the default: a 12 × 12 window misplaced T1 by 1.6 eV on a
    /// tetracarbazolyl-isophthalonitrile, `examples/active_space_check.rs`).
    pub active_occ: Option<usize>,
    pub active_vir: Option<usize>,
    /// Use these coordinates (one point per atom of the molecule) as they are: no torsion
    /// model, the twists measured from them, no averaging.
    pub geometry: Option<Coordinates>,
}

impl Default for EstimateParams {
    fn default() -> Self {
        EstimateParams {
            temperature_k: 300.0,
            twist_deg: None,
            scan_step_deg: 15.0,
            n_states: 6,
            ct_threshold: 0.7,
            le_threshold: 0.3,
            active_occ: None,
            active_vir: None,
            geometry: None,
        }
    }
}

#[derive(Debug, Clone, Serialize)]
pub struct UnitInfo {
    pub atoms: Vec<usize>,
    /// "donor", "acceptor", "donor+acceptor" (one unit only) or "bridge/other".
    pub role: String,
    pub homo_ev: f64,
    pub lumo_ev: f64,
    /// Lowest singlet and triplet of the unit on its own (capped with hydrogen, planar layout,
    /// corrected CIS): the local excitations the molecule's states are compared with.
    pub local_s1_ev: f64,
    pub local_t1_ev: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct LinkInfo {
    /// Atom indices (0-based) of the bond.
    pub atoms: (usize, usize),
    pub equilibrium_deg: f64,
    /// (θ in degrees, total energy in kJ/mol, Boltzmann weight).
    pub scan: Vec<(f64, f64, f64)>,
}

#[derive(Debug, Clone, Serialize)]
pub struct StateInfo {
    pub multiplicity: &'static str,
    pub energy_ev: f64,
    pub osc_strength: f64,
    pub ct_number: f64,
    /// "CT", "LE" or "mixed".
    pub label: &'static str,
    /// Unit holding most of the hole / the electron.
    pub hole_unit: usize,
    pub electron_unit: usize,
}

/// Starting twist (degrees) of links that share an atom: a start inside the propeller basin
/// (triarylamine and triarylborane propellers twist their rings by roughly 30–50°; from memory
/// of triphenylamine and triarylborane crystal structures, not from a checked source).
pub const PROPELLER_START_DEG: f64 = 45.0;

/// Maximum coordinate-descent sweeps over links that share an atom.
pub const TORSION_SWEEPS: usize = 4;

/// Share of each link's Boltzmann weight covered by the averaging points.
pub const AVERAGE_WEIGHT_COVERAGE: f64 = 0.99;

/// S1, T1 and f(S1) with one link at `theta_deg`, the others at equilibrium; `weight` is the
/// renormalised Boltzmann weight of the point within its link.
#[derive(Debug, Clone, Serialize)]
pub struct AngleSample {
    pub link: usize,
    pub theta_deg: f64,
    pub weight: f64,
    pub s1_ev: f64,
    pub t1_ev: f64,
    pub f_s1: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct Estimate {
    pub units: Vec<UnitInfo>,
    pub links: Vec<LinkInfo>,
    pub twists_deg: Vec<f64>,
    pub homo_ev: f64,
    pub lumo_ev: f64,
    /// Spatial overlap Σ_μ |c_μH c_μL| of the HOMO and LUMO on the π sites (0 = separated).
    pub homo_lumo_overlap: f64,
    pub singlets: Vec<StateInfo>,
    pub triplets: Vec<StateInfo>,
    pub s1_ev: f64,
    pub t1_ev: f64,
    pub delta_est_ev: f64,
    pub f_s1: f64,
    /// Torsion-averaged values (equal to the equilibrium ones when the twist is fixed).
    pub avg_s1_ev: f64,
    pub avg_t1_ev: f64,
    pub avg_delta_est_ev: f64,
    pub avg_f_s1: f64,
    /// The per-angle values behind the averages (one link moved, the others at equilibrium),
    /// for quantities that must be averaged per angle (rates).
    pub angle_samples: Vec<AngleSample>,
    /// Coordinates (Å, one per atom, hydrogens implicit) of the equilibrium geometry.
    pub geometry: Vec<[f64; 3]>,
    /// S1 hole and electron populations per atom at the equilibrium geometry (each sums to
    /// 1; 0 on atoms without a π site; empty without a singlet): where S1 takes its electron
    /// from and puts it.
    pub s1_hole_by_atom: Vec<f64>,
    pub s1_electron_by_atom: Vec<f64>,
    /// Plain PPP-CIS at the equilibrium twists, without the corrections (for comparison).
    pub raw_s1_ev: f64,
    pub raw_t1_ev: f64,
    pub raw_delta_est_ev: f64,
    /// Lowest triplet labelled LE among the computed triplets, the unit it sits on, and its
    /// gap below S1 (S1 − ³LE; positive when the local triplet lies below S1).
    pub lowest_3le_ev: Option<f64>,
    pub lowest_3le_unit: Option<usize>,
    pub s1_minus_3le_ev: Option<f64>,
    /// S1 − local T1 of the donor and of the acceptor unit (isolated units).
    pub s1_minus_donor_t1_ev: Option<f64>,
    pub s1_minus_acceptor_t1_ev: Option<f64>,
    /// Quantities that missed the parameter set's validation bar: not to be ranked on.
    pub unvalidated: Vec<String>,
    /// Warnings a chemist should read (n→π* blind spot, perpendicular links, ...).
    pub flags: Vec<String>,
    pub parameters: String,
}

/// HOMO and LUMO energies, lowest singlet and lowest triplet (all eV) of a small molecule at its
/// planar layout with corrected CIS, or NaN where the SCF fails: the levels of a unit (or of a
/// fragment capped with hydrogen) on its own.
pub fn local_states(m: &Molecule, ppp: &PppParams) -> (f64, f64, f64, f64) {
    planar_scf(m, ppp).map_or((f64::NAN, f64::NAN, f64::NAN, f64::NAN), |(b, r)| {
        local_levels(&b, &r, ppp)
    })
}

/// [`local_states`] from a model and its SCF solution already at hand.
pub fn local_levels(b: &BuiltModel, r: &ScfResult, ppp: &PppParams) -> (f64, f64, f64, f64) {
    let x = cis(
        &b.model,
        r,
        &CisParams {
            n_roots: 1,
            corrections: ppp.corrections,
            ..CisParams::default()
        },
    );
    let (homo, lumo) = frontier(r);
    (
        homo,
        lumo,
        x.singlets.first().map_or(f64::NAN, |s| s.energy),
        x.triplets.first().map_or(f64::NAN, |s| s.energy),
    )
}

/// HOMO and LUMO (eV) of a small molecule at its planar layout, or NaN where the SCF fails.
fn frontier_only(m: &Molecule, ppp: &PppParams) -> (f64, f64) {
    planar_scf(m, ppp).map_or((f64::NAN, f64::NAN), |(_, r)| frontier(&r))
}

/// The π model of a small molecule at its planar layout and its SCF solution.
pub fn planar_scf(m: &Molecule, ppp: &PppParams) -> Result<(BuiltModel, ScfResult), PiError> {
    let b = build_model(m, &layout(m), ppp)?;
    let r = scf(&b.model, &ScfParams::default())?;
    Ok((b, r))
}

/// HOMO and LUMO energies (eV) of an SCF solution (the LUMO index clamped to the last orbital).
fn frontier(r: &ScfResult) -> (f64, f64) {
    let l = r.nocc.min(r.energies.len() - 1);
    (r.energies[r.nocc.saturating_sub(1)], r.energies[l])
}

/// Acyclic amine N and three-coordinate B atoms in the π system with at least one ring
/// neighbour: the hubs of diarylamine / dialkylamine donors and triarylborane acceptors.
fn is_hub(mol: &Molecule, typing: &PiTyping, ring_atom: &[bool], a: usize) -> bool {
    !ring_atom[a]
        && mol.degree(AtomIdx::new(a)) == 3
        && (matches!(typing.sites[a], PiSite::Site("N2") | PiSite::Site("B"))
            || is_carbonyl_hub(mol, typing, ring_atom, a))
}

/// A diaryl ketone carbon (benzophenone-type): acyclic π carbon with a C=O and two ring
/// neighbours. Its C–aryl bonds twist (crowded ortho hydrogens) but it is no unit boundary.
fn is_carbonyl_hub(mol: &Molecule, typing: &PiTyping, ring_atom: &[bool], a: usize) -> bool {
    let ai = AtomIdx::new(a);
    !ring_atom[a]
        && matches!(typing.sites[a], PiSite::Site("C"))
        && mol.neighbours(ai).any(|(b, e)| {
            mol.bond(e).order == crate::chem::BondOrder::Double
                && matches!(typing.sites[b.index()], PiSite::Site("O1"))
        })
        && mol
            .neighbours(ai)
            .filter(|(b, _)| ring_atom[b.index()])
            .count()
            == 2
}

/// Links (the bonds that twist): single, non-ring, non-aromatic bonds between two π ring atoms,
/// or between a π ring atom and a hub (acyclic amine N, three-coordinate B, or a diaryl ketone
/// carbon in the π system).
pub fn links(mol: &Molecule) -> Vec<(usize, usize)> {
    let ring = rings::ring_bonds(mol);
    let ra = rings::ring_atoms(mol, &ring);
    links_with(mol, &ring, &ra, &perceive(mol))
}

/// [`links`] from the ring bonds, ring atoms and π typing already perceived.
fn links_with(
    mol: &Molecule,
    ring: &[bool],
    ra: &[bool],
    typing: &PiTyping,
) -> Vec<(usize, usize)> {
    mol.graph
        .edge_indices()
        .filter(|e| !ring[e.index()] && !mol.bond(*e).aromatic)
        .filter(|e| mol.bond(*e).order == crate::chem::BondOrder::Single)
        .filter_map(|e| {
            let (a, b) = mol.graph.edge_endpoints(e).expect("edge exists");
            let (a, b) = (a.index(), b.index());
            // Both ends must carry a π orbital: a bond from an sp3 ring atom (the phenyls of
            // a 9,9-diphenylacridan) is a steric rotor of the layout, not a conjugation link.
            let pi = |x: usize| matches!(typing.sites[x], PiSite::Site(_));
            let ok = pi(a)
                && pi(b)
                && ((ra[a] && (ra[b] || is_hub(mol, typing, ra, b)))
                    || (ra[b] && is_hub(mol, typing, ra, a)));
            ok.then_some((a, b))
        })
        .collect()
}

/// The units used for roles and charge-transfer character: the pieces left after cutting
/// every link, except that a hub joins its ring neighbours' pieces — all but one: an amine
/// N keeps apart the neighbour piece with the lowest LUMO (the acceptor side), a boron the one
/// with the highest HOMO (the donor side); frontier energies from each piece's own π
/// calculation (capped with hydrogen). A hub with one ring neighbour stays a unit of its own
/// (a dialkylamino donor). Returns the unit of every atom.
pub fn partition(mol: &Molecule, ppp: &PppParams) -> Vec<usize> {
    let ring = rings::ring_bonds(mol);
    let ra = rings::ring_atoms(mol, &ring);
    let typing = perceive(mol);
    let ls = links_with(mol, &ring, &ra, &typing);
    partition_with(mol, ppp, &ls, &typing, &ra)
}

/// [`partition`] with the links, π typing and ring atoms already perceived.
fn partition_with(
    mol: &Molecule,
    ppp: &PppParams,
    ls: &[(usize, usize)],
    typing: &PiTyping,
    ra: &[bool],
) -> Vec<usize> {
    let fine = units(mol, ls);
    let n_fine = fine.iter().max().map_or(0, |m| m + 1);
    let mut levels: Vec<Option<(f64, f64)>> = vec![None; n_fine];
    let mut frontier_of = |u: usize| -> (f64, f64) {
        *levels[u].get_or_insert_with(|| {
            let atoms: Vec<usize> = (0..mol.atom_count()).filter(|&a| fine[a] == u).collect();
            frontier_only(&unit_molecule(mol, &atoms), ppp)
        })
    };
    // Union-find over fine units.
    let mut parent: Vec<usize> = (0..n_fine).collect();
    fn root(p: &mut [usize], x: usize) -> usize {
        let mut r = x;
        while p[r] != r {
            r = p[r];
        }
        p[x] = r;
        r
    }
    for hub in 0..mol.atom_count() {
        if !is_hub(mol, typing, ra, hub) {
            continue;
        }
        let mut nb: Vec<usize> = ls
            .iter()
            .filter_map(|&(a, b)| {
                if a == hub {
                    Some(fine[b])
                } else if b == hub {
                    Some(fine[a])
                } else {
                    None
                }
            })
            .collect();
        nb.sort_unstable();
        nb.dedup();
        if is_carbonyl_hub(mol, typing, ra, hub) {
            // A ketone bridge belongs with both of its aryls.
            for &u in &nb {
                let (x, y) = (root(&mut parent, fine[hub]), root(&mut parent, u));
                parent[y] = x;
            }
            continue;
        }
        if nb.len() < 2 {
            continue;
        }
        let donor_hub = matches!(typing.sites[hub], PiSite::Site("N2"));
        let key = |u: usize, f: &mut dyn FnMut(usize) -> (f64, f64)| {
            let (h, l) = f(u);
            if donor_hub { -l } else { h }
        };
        // The neighbour kept apart: extreme key, ties to the lowest unit index (deterministic
        // for a given atom order; symmetric neighbours give the same energies either way).
        let mut apart = nb[0];
        let mut best = key(apart, &mut frontier_of);
        for &u in &nb[1..] {
            let k = key(u, &mut frontier_of);
            if k > best + 1e-9 {
                apart = u;
                best = k;
            }
        }
        let hu = fine[hub];
        for &u in &nb {
            if u != apart {
                let (x, y) = (root(&mut parent, hu), root(&mut parent, u));
                parent[y] = x;
            }
        }
    }
    // Renumber in order of first atom.
    let mut label = vec![usize::MAX; n_fine];
    let mut next = 0;
    (0..mol.atom_count())
        .map(|a| {
            let r = root(&mut parent, fine[a]);
            if label[r] == usize::MAX {
                label[r] = next;
                next += 1;
            }
            label[r]
        })
        .collect()
}

/// Unit of every atom after cutting `links`.
pub fn units(mol: &Molecule, links: &[(usize, usize)]) -> Vec<usize> {
    let n = mol.atom_count();
    let mut unit = vec![usize::MAX; n];
    let mut count = 0;
    for s in 0..n {
        if unit[s] != usize::MAX {
            continue;
        }
        unit[s] = count;
        let mut stack = vec![s];
        while let Some(x) = stack.pop() {
            for (y, _) in mol.neighbours(AtomIdx::new(x)) {
                let y = y.index();
                let cut = links
                    .iter()
                    .any(|&(a, b)| (a == x && b == y) || (a == y && b == x));
                if !cut && unit[y] == usize::MAX {
                    unit[y] = count;
                    stack.push(y);
                }
            }
        }
        count += 1;
    }
    unit
}

/// The unit as its own molecule, each cut bond replaced by a hydrogen.
fn unit_molecule(mol: &Molecule, atoms: &[usize]) -> Molecule {
    let mut map = vec![usize::MAX; mol.atom_count()];
    let mut m = Molecule::new();
    for &a in atoms {
        let mut at = mol.atom(AtomIdx::new(a)).clone();
        at.stereo_refs.clear();
        at.chirality = None;
        map[a] = m.add_atom(at).index();
    }
    for e in mol.graph.edge_indices() {
        let (x, y) = mol.graph.edge_endpoints(e).expect("edge exists");
        match (map[x.index()], map[y.index()]) {
            (usize::MAX, usize::MAX) => {}
            (usize::MAX, j) | (j, usize::MAX) => m.atom_mut(AtomIdx::new(j)).hydrogens += 1,
            (i, j) => {
                let mut b = *mol.bond(e);
                b.stereo = None;
                m.add_bond(AtomIdx::new(i), AtomIdx::new(j), b);
            }
        }
    }
    m
}

struct Snapshot {
    density: nalgebra::DMatrix<f64>,
    homo: f64,
    lumo: f64,
    overlap: f64,
    singlets: Vec<StateInfo>,
    triplets: Vec<StateInfo>,
    /// Lowest singlet and triplet (eV) of plain CIS (no corrections) on the same SCF, when
    /// asked for.
    raw: Option<(f64, f64)>,
    /// S1 hole and electron populations per atom of the molecule (0 on atoms without a π
    /// site); empty without a singlet.
    s1_sites: (Vec<f64>, Vec<f64>),
}

/// The states at `coords` (corrected CIS, `p.n_states` roots each) and, with `with_raw`, the
/// lowest plain-CIS singlet and triplet from the same SCF solution.
#[allow(clippy::too_many_arguments)]
fn states_at(
    mol: &Molecule,
    coords: &Coordinates,
    ppp: &PppParams,
    unit_of: &[usize],
    n_units: usize,
    p: &EstimateParams,
    with_raw: bool,
    initial_density: Option<nalgebra::DMatrix<f64>>,
) -> Result<Snapshot, PiError> {
    let built = build_model(mol, coords, ppp)?;
    let r = scf(
        &built.model,
        &ScfParams {
            initial_density,
            ..ScfParams::default()
        },
    )?;
    let site_unit: Vec<usize> = built.site_atom.iter().map(|&a| unit_of[a]).collect();
    let cis_params = CisParams {
        n_roots: p.n_states,
        n_occ: p.active_occ,
        n_vir: p.active_vir,
        corrections: ppp.corrections,
        site_unit: Some(site_unit.clone()),
    };
    let x = cis(&built.model, &r, &cis_params);
    let raw = with_raw.then(|| {
        let y = cis(
            &built.model,
            &r,
            &CisParams {
                n_roots: 1,
                corrections: Corrections::default(),
                ..cis_params.clone()
            },
        );
        (
            y.singlets.first().map_or(f64::NAN, |s| s.energy),
            y.triplets.first().map_or(f64::NAN, |s| s.energy),
        )
    });
    let info = |s: &super::ExcitedState| {
        let c = characterise(&r, &x, s, &site_unit, n_units);
        let argmax = |v: &[f64]| {
            (0..v.len())
                .max_by(|&i, &j| v[i].total_cmp(&v[j]))
                .unwrap_or(0)
        };
        StateInfo {
            multiplicity: match s.multiplicity {
                Multiplicity::Singlet => "singlet",
                Multiplicity::Triplet => "triplet",
            },
            energy_ev: s.energy,
            osc_strength: s.osc_strength,
            ct_number: c.ct,
            label: if c.ct >= p.ct_threshold {
                "CT"
            } else if c.ct <= p.le_threshold {
                "LE"
            } else {
                "mixed"
            },
            hole_unit: argmax(&c.hole),
            electron_unit: argmax(&c.electron),
        }
    };
    let (h, l) = (r.nocc.saturating_sub(1), r.nocc);
    let n = built.model.n_sites();
    let overlap = if l < n {
        (0..n)
            .map(|m| (r.coeffs[(m, h)] * r.coeffs[(m, l)]).abs())
            .sum()
    } else {
        0.0
    };
    let s1_sites = match x.singlets.first() {
        Some(s1) => {
            let (h_site, e_site) = super::analysis::site_populations(&r, &x, s1);
            let mut hole = vec![0.0; mol.atom_count()];
            let mut electron = vec![0.0; mol.atom_count()];
            for (k, &a) in built.site_atom.iter().enumerate() {
                hole[a] = h_site[k];
                electron[a] = e_site[k];
            }
            (hole, electron)
        }
        None => (Vec::new(), Vec::new()),
    };
    Ok(Snapshot {
        s1_sites,
        density: r.density.clone(),
        homo: r.energies[h],
        lumo: if l < n { r.energies[l] } else { f64::NAN },
        overlap,
        singlets: x.singlets.iter().map(info).collect(),
        triplets: x.triplets.iter().map(info).collect(),
        raw,
    })
}

fn twisted(
    mol: &Molecule,
    base: &Coordinates,
    links: &[(usize, usize)],
    twists: &[f64],
) -> Coordinates {
    let mut c = base.clone();
    for (&(a, b), &t) in links.iter().zip(twists) {
        rotate_about_bond(mol, &mut c.points, a, b, t.to_radians());
    }
    c
}

/// Estimate the excited states of `mol` (see the module documentation).
pub fn estimate(mol: &Molecule, ppp: &PppParams, p: &EstimateParams) -> Result<Estimate, PiError> {
    // Rings, π typing and links once; the partition and the flags reuse them.
    let ring = rings::ring_bonds(mol);
    let ra = rings::ring_atoms(mol, &ring);
    let typing = perceive(mol);
    let ls = links_with(mol, &ring, &ra, &typing);
    let unit_of = partition_with(mol, ppp, &ls, &typing, &ra);
    let n_units = unit_of.iter().max().map_or(0, |m| m + 1);
    // Units and their roles.
    let mut units: Vec<UnitInfo> = (0..n_units)
        .map(|u| {
            let atoms: Vec<usize> = (0..mol.atom_count()).filter(|&a| unit_of[a] == u).collect();
            let um = unit_molecule(mol, &atoms);
            let (homo, lumo, ls1, lt1) = local_states(&um, ppp);
            UnitInfo {
                atoms,
                role: String::new(),
                homo_ev: homo,
                lumo_ev: lumo,
                local_s1_ev: ls1,
                local_t1_ev: lt1,
            }
        })
        .collect();
    let best = |key: &dyn Fn(&UnitInfo) -> f64| {
        (0..units.len())
            .filter(|&u| key(&units[u]).is_finite())
            .max_by(|&a, &b| key(&units[a]).total_cmp(&key(&units[b])))
    };
    // A unit that is only an amine hub with alkyl groups (dialkylamino) has no π system of its
    // own to compute; its lone pair makes it the donor.
    let amine_only = |u: &UnitInfo| {
        !u.homo_ev.is_finite()
            && u.atoms
                .iter()
                .any(|&a| matches!(typing.sites[a], PiSite::Site("N2")))
    };
    let donor = units
        .iter()
        .position(amine_only)
        .or_else(|| best(&|u: &UnitInfo| u.homo_ev));
    let acceptor = best(&|u: &UnitInfo| -u.lumo_ev);
    for (i, u) in units.iter_mut().enumerate() {
        u.role = match (Some(i) == donor, Some(i) == acceptor) {
            (true, true) => "donor+acceptor",
            (true, false) => "donor",
            (false, true) => "acceptor",
            _ => "bridge/other",
        }
        .to_string();
    }
    // Torsion of each link.
    let tp = ppp.torsion_params(p.temperature_k);
    let steps = (180.0 / p.scan_step_deg).round() as usize;
    let grid: Vec<f64> = (0..=steps).map(|k| k as f64 * p.scan_step_deg).collect();
    let base = layout(mol);
    let mut link_info: Vec<LinkInfo> = ls
        .iter()
        .map(|&(a, b)| {
            let t = match (&p.geometry, p.twist_deg) {
                (Some(g), _) => measured_twist(mol, g, a, b),
                (None, Some(t)) => t,
                (None, None) => 0.0,
            };
            LinkInfo {
                atoms: (a, b),
                equilibrium_deg: t,
                scan: vec![(t, 0.0, 1.0)],
            }
        })
        .collect();
    if p.geometry.is_none() && p.twist_deg.is_none() {
        // Each link scanned with the others where they are. Links that share an atom (the
        // rotors of a triarylamine or triarylborane propeller) clash with each other, so they
        // are relaxed by sweeps (coordinate descent, at most TORSION_SWEEPS, until no
        // equilibrium moves by more than 2°); independent links need one pass.
        let coupled: Vec<bool> = ls
            .iter()
            .enumerate()
            .map(|(k, &(a, b))| {
                ls.iter()
                    .enumerate()
                    .any(|(j, &(c, d))| j != k && (a == c || a == d || b == c || b == d))
            })
            .collect();
        // Propeller start: coupled links begin at PROPELLER_START_DEG (coordinate descent from
        // a planar start gets trapped with two rings perpendicular and one planar).
        for (k, l) in link_info.iter_mut().enumerate() {
            if coupled[k] {
                l.equilibrium_deg = PROPELLER_START_DEG;
            }
        }
        let interpolate = can_interpolate(&grid);
        for sweep in 0..TORSION_SWEEPS {
            let mut moved = false;
            for k in 0..ls.len() {
                if sweep > 0 && !coupled[k] {
                    continue;
                }
                // The other links at their current angles, this one at 0°.
                let mut tw: Vec<f64> = link_info.iter().map(|l| l.equilibrium_deg).collect();
                tw[k] = 0.0;
                let start = twisted(mol, &base, &ls, &tw);
                let raw = raw_scan_with(mol, ls[k], &grid, ppp, interpolate, &start)?;
                let prof = profile(&raw, &tp);
                moved |=
                    sweep > 0 && (prof.equilibrium_deg - link_info[k].equilibrium_deg).abs() > 2.0;
                link_info[k] = LinkInfo {
                    atoms: ls[k],
                    equilibrium_deg: prof.equilibrium_deg,
                    scan: prof
                        .points
                        .iter()
                        .map(|q| (q.theta_deg, q.e_total, q.weight))
                        .collect(),
                };
            }
            if sweep > 0 && !moved {
                break;
            }
            if !coupled.iter().any(|&c| c) {
                break;
            }
        }
    }
    let eq: Vec<f64> = link_info.iter().map(|l| l.equilibrium_deg).collect();
    let eq_coords = match &p.geometry {
        Some(g) => g.clone(),
        None => twisted(mol, &base, &ls, &eq),
    };
    let at_eq = states_at(mol, &eq_coords, ppp, &unit_of, n_units, p, true, None)?;
    let s1 = at_eq.singlets.first().map_or(f64::NAN, |s| s.energy_ev);
    let t1 = at_eq.triplets.first().map_or(f64::NAN, |s| s.energy_ev);
    let f1 = at_eq.singlets.first().map_or(f64::NAN, |s| s.osc_strength);
    // Averages over the per-link Boltzmann distributions: for each link the grid points that
    // together carry 99 % of its weight (renormalised), the other links at equilibrium, the SCF
    // warm-started from the equilibrium density. Per-angle values are kept for rate averages.
    let (mut as1, mut at1, mut adest, mut af) = (s1, t1, s1 - t1, f1);
    let mut samples = Vec::new();
    let mut skipped: Vec<(usize, f64)> = Vec::new();
    if p.twist_deg.is_none() && p.geometry.is_none() && !ls.is_empty() {
        let (mut ss, mut tt, mut dd, mut ff, mut wsum) = (0.0, 0.0, 0.0, 0.0, 0.0);
        // Only S1 and T1 enter the averages: one root per multiplicity.
        let p1 = EstimateParams {
            n_states: 1,
            ..p.clone()
        };
        for (k, li) in link_info.iter().enumerate() {
            let mut pts: Vec<(f64, f64)> = li.scan.iter().map(|q| (q.0, q.2)).collect();
            pts.sort_by(|a, b| b.1.total_cmp(&a.1).then(a.0.total_cmp(&b.0)));
            let total: f64 = pts.iter().map(|q| q.1).sum();
            let mut kept = Vec::new();
            let mut acc = 0.0;
            for q in pts {
                if acc >= AVERAGE_WEIGHT_COVERAGE * total {
                    break;
                }
                acc += q.1;
                kept.push(q);
            }
            for (theta, w) in kept {
                // At the link's own equilibrium angle (a minimum at a scan end, 0° or 180°, is
                // not parabola-refined) the geometry is the equilibrium one: its states are known.
                let (s, t, f) = if theta == eq[k] {
                    (s1, t1, f1)
                } else {
                    let mut tw = eq.clone();
                    tw[k] = theta;
                    let snap = match states_at(
                        mol,
                        &twisted(mol, &base, &ls, &tw),
                        ppp,
                        &unit_of,
                        n_units,
                        &p1,
                        false,
                        Some(at_eq.density.clone()),
                    ) {
                        Ok(x) => x,
                        Err(PiError::NotConverged { .. }) => {
                            skipped.push((k, theta));
                            continue;
                        }
                        Err(e) => return Err(e),
                    };
                    (
                        snap.singlets[0].energy_ev,
                        snap.triplets[0].energy_ev,
                        snap.singlets[0].osc_strength,
                    )
                };
                let wl = w / acc / ls.len() as f64;
                wsum += wl;
                ss += wl * s;
                tt += wl * t;
                dd += wl * (s - t);
                ff += wl * f;
                samples.push(AngleSample {
                    link: k,
                    theta_deg: theta,
                    weight: w / acc,
                    s1_ev: s,
                    t1_ev: t,
                    f_s1: f,
                });
            }
        }
        // Renormalise (points whose SCF failed are left out).
        if wsum > 0.0 {
            as1 = ss / wsum;
            at1 = tt / wsum;
            adest = dd / wsum;
            af = ff / wsum;
        }
    }
    let (raw_s1, raw_t1) = at_eq.raw.unwrap_or((f64::NAN, f64::NAN));
    let le3 = at_eq.triplets.iter().find(|t| t.label == "LE");
    let unit_t1 = |u: Option<usize>| u.map(|u| units[u].local_t1_ev).filter(|x| x.is_finite());
    let mut flags = estimate_flags(mol, &typing, &units, &link_info);
    let nan_scan: usize = link_info
        .iter()
        .map(|l| l.scan.iter().filter(|q| !q.1.is_finite()).count())
        .sum();
    if nan_scan > 0 || !skipped.is_empty() {
        flags.push(format!(
            "SCF did not converge at {} torsion-scan point(s) and {} averaging point(s) \
             (near-degenerate frontier orbitals); they were left out",
            nan_scan,
            skipped.len()
        ));
    }
    let (mh, ch) = crate::geometry::with_hydrogens(mol, &eq_coords);
    let clash = crate::geometry::steric::clashes(&mh, &ch);
    if !clash.is_empty() {
        let (i, j, r) = clash[0];
        flags.push(format!(
            "clash: {} atom pair(s) of the equilibrium geometry closer than {} Å (heavy) / {} Å \
             (H–H), e.g. atoms {} and {} at {r:.2} Å (hydrogens numbered after the heavy atoms); \
             rigid units cannot relax, treat the twist and energies with care",
            clash.len(),
            crate::geometry::steric::CLASH_HEAVY_MIN,
            crate::geometry::steric::CLASH_HH_MIN,
            i + 1,
            j + 1
        ));
    }
    Ok(Estimate {
        raw_s1_ev: raw_s1,
        raw_t1_ev: raw_t1,
        raw_delta_est_ev: raw_s1 - raw_t1,
        lowest_3le_ev: le3.map(|t| t.energy_ev),
        lowest_3le_unit: le3.map(|t| t.hole_unit),
        s1_minus_3le_ev: le3.map(|t| s1 - t.energy_ev),
        s1_minus_donor_t1_ev: unit_t1(donor).map(|t| s1 - t),
        s1_minus_acceptor_t1_ev: unit_t1(acceptor).map(|t| s1 - t),
        unvalidated: ppp
            .validation
            .failed()
            .iter()
            .map(|s| s.to_string())
            .collect(),
        flags,
        units,
        links: link_info,
        twists_deg: eq,
        homo_ev: at_eq.homo,
        lumo_ev: at_eq.lumo,
        homo_lumo_overlap: at_eq.overlap,
        s1_ev: s1,
        t1_ev: t1,
        delta_est_ev: s1 - t1,
        f_s1: f1,
        singlets: at_eq.singlets,
        triplets: at_eq.triplets,
        avg_s1_ev: as1,
        avg_t1_ev: at1,
        avg_delta_est_ev: adest,
        avg_f_s1: af,
        angle_samples: samples,
        geometry: eq_coords.points.clone(),
        s1_hole_by_atom: at_eq.s1_sites.0,
        s1_electron_by_atom: at_eq.s1_sites.1,
        parameters: ppp.name.clone(),
    })
}

/// Warnings on what the π model cannot see or where it is exact for the wrong reason.
fn estimate_flags(
    mol: &Molecule,
    typing: &PiTyping,
    units: &[UnitInfo],
    links: &[LinkInfo],
) -> Vec<String> {
    let mut flags = Vec::new();
    // n→π*: aromatic aza N and carbonyl/thione heteroatoms carry in-plane lone pairs whose
    // n→π* states lie near or below the lowest π→π* state in azines and ketones.
    for (u, unit) in units.iter().enumerate() {
        let lone: Vec<usize> = unit
            .atoms
            .iter()
            .copied()
            .filter(|&a| match typing.sites[a] {
                PiSite::Site("N1") => mol.atom(crate::chem::AtomIdx::new(a)).aromatic,
                PiSite::Site("O1") | PiSite::Site("S1") => true,
                _ => false,
            })
            .collect();
        if !lone.is_empty() {
            flags.push(format!(
                "n-pi*: unit {u} ({}) has in-plane lone pairs (atoms {}); n->pi* states are not \
                 modelled and may lie below the pi->pi* S1/T1",
                unit.role,
                lone.iter()
                    .map(|a| a.to_string())
                    .collect::<Vec<_>>()
                    .join(",")
            ));
        }
    }
    if typing.sites.contains(&PiSite::Site("B")) {
        flags.push(
            "boron: the three-coordinate B parameters are derived (Hückel-mapped), not yet \
             calibrated against reference data; energies of boron-containing units are unreliable"
                .into(),
        );
    }
    for l in links {
        if (l.equilibrium_deg - 90.0).abs() < 1.0 {
            flags.push(format!(
                "perpendicular link {}-{}: under zero differential overlap the coupling across \
                 it vanishes, so dEST and f of a pure charge-transfer state are exactly 0 here \
                 (real molecules keep small nonzero values)",
                l.atoms.0, l.atoms.1
            ));
        }
    }
    flags
}

/// Twist (degrees, 0–90) across link a–b: the angle between the p axes of its two atoms.
fn measured_twist(mol: &Molecule, g: &Coordinates, a: usize, b: usize) -> f64 {
    match (
        super::build::p_axis(mol, &g.points, a, b, 0),
        super::build::p_axis(mol, &g.points, b, a, 0),
    ) {
        (Some(x), Some(y)) => {
            let c = crate::geometry::dot(x, y).abs().min(1.0);
            c.acos().to_degrees()
        }
        _ => 0.0,
    }
}
