//! From a molecule with coordinates to an explicit PPP model: π sites from `typing`, site
//! parameters from a parameter set, β from the bond types scaled by the overlap of the two p
//! orbitals: β = β₀·|cos θ|, θ the angle between the p axes (each the normal of its atom's
//! bonding plane). For a rigid rotation about a single bond θ is the twist itself, so
//! β(θ) = β₀ cos θ across twisted inter-unit bonds (science.md a.1), and planar units keep β₀.

use crate::chem::{AtomIdx, Molecule};
use crate::geometry::{Coordinates, Point, cross, sub};

use super::params::PppParams;
use super::typing::{PiSite, perceive, unparameterised};
use super::{PiError, PppModel};

/// A model and the atom each π site stands for.
#[derive(Debug, Clone)]
pub struct BuiltModel {
    pub model: PppModel,
    /// `site_atom[s]` is the atom index of site s.
    pub site_atom: Vec<usize>,
}

fn unit(a: Point) -> Option<Point> {
    let n = (a[0] * a[0] + a[1] * a[1] + a[2] * a[2]).sqrt();
    (n > 1e-8).then(|| [a[0] / n, a[1] / n, a[2] / n])
}

/// The p-orbital axis of atom a: the normal of the plane of its neighbours; for a terminal or
/// linear (sp) atom, the axis of the nearest neighbour that has one (a nitrile's out-of-plane
/// π component is the one that conjugates with its ring, science.md a.3).
pub(crate) fn p_axis(
    mol: &Molecule,
    pts: &[Point],
    a: usize,
    from: usize,
    depth: u8,
) -> Option<Point> {
    let nb: Vec<usize> = mol
        .neighbours(AtomIdx::new(a))
        .map(|(b, _)| b.index())
        .collect();
    for (i, &x) in nb.iter().enumerate() {
        for &y in &nb[i + 1..] {
            if let Some(n) = unit(cross(sub(pts[x], pts[a]), sub(pts[y], pts[a]))) {
                return Some(n);
            }
        }
    }
    if depth < 3 {
        for &b in &nb {
            if b != from
                && let Some(n) = p_axis(mol, pts, b, a, depth + 1)
            {
                return Some(n);
            }
        }
    }
    None
}

/// Build the PPP model of `mol` at `coords`.
///
/// # Errors
/// [`PiError::NotParameterised`] naming the atoms (element and index) that sit in the π
/// system but have no site type, or bond type pairs without a β; [`PiError::BadModel`] when
/// there are no π sites.
pub fn build_model(
    mol: &Molecule,
    coords: &Coordinates,
    params: &PppParams,
) -> Result<BuiltModel, PiError> {
    let typing = perceive(mol);
    let bad = unparameterised(mol, &typing);
    if !bad.is_empty() {
        return Err(PiError::NotParameterised(
            bad.iter()
                .map(|(a, s)| format!("{s} (atom {})", a + 1))
                .collect::<Vec<_>>()
                .join(", "),
        ));
    }
    let site_atom = typing.site_atoms();
    if site_atom.is_empty() {
        return Err(PiError::BadModel("no π system".into()));
    }
    let mut index = vec![usize::MAX; mol.atom_count()];
    for (s, &a) in site_atom.iter().enumerate() {
        index[a] = s;
    }
    let kind = |a: usize| match typing.sites[a] {
        PiSite::Site(k) => k,
        PiSite::None => unreachable!("site atoms have a type"),
    };
    let mut ip = Vec::with_capacity(site_atom.len());
    let mut gamma_self = Vec::with_capacity(site_atom.len());
    let mut core = Vec::with_capacity(site_atom.len());
    for &a in &site_atom {
        let k = kind(a);
        let p = params
            .sites
            .get(k)
            .ok_or_else(|| PiError::NotParameterised(format!("site type {k} (atom {})", a + 1)))?;
        let mut i = p.ip;
        let ind = typing.inductive[a];
        if ind.sulfone {
            i += params.inductive.sulfone_ip_shift;
        }
        if ind.phosphine_oxide {
            i += params.inductive.phosphine_oxide_ip_shift;
        }
        ip.push(i);
        gamma_self.push(p.gamma);
        core.push(p.electrons as f64);
    }
    let pts = &coords.points;
    let axes: Vec<Option<Point>> = site_atom
        .iter()
        .map(|&a| p_axis(mol, pts, a, usize::MAX, 0))
        .collect();
    let mut beta = Vec::new();
    for e in mol.graph.edge_indices() {
        let (x, y) = mol.graph.edge_endpoints(e).expect("edge exists");
        let (sx, sy) = (index[x.index()], index[y.index()]);
        if sx == usize::MAX || sy == usize::MAX {
            continue;
        }
        let (kx, ky) = (kind(x.index()), kind(y.index()));
        let b0 = params.beta(kx, ky).ok_or_else(|| {
            PiError::NotParameterised(format!(
                "bond {kx}–{ky} (atoms {} and {})",
                x.index() + 1,
                y.index() + 1
            ))
        })?;
        let c = match (axes[sx], axes[sy]) {
            (Some(u), Some(v)) => (u[0] * v[0] + u[1] * v[1] + u[2] * v[2]).abs().min(1.0),
            _ => 1.0,
        };
        beta.push((sx, sy, b0 * c));
    }
    let model = PppModel {
        positions: site_atom.iter().map(|&a| pts[a]).collect(),
        ip,
        gamma_self,
        core,
        beta,
        gamma_form: params.gamma_form,
    };
    Ok(BuiltModel { model, site_atom })
}
