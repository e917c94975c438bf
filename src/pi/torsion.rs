//! Torsion energy about one rotatable bond: E(θ) = s_steric·E_rep(θ) + c_conj·E_π(θ), with E_rep
//! the MM3-type repulsion between the two sides (`geometry::steric`, hydrogens included) and
//! E_π the PPP π energy (electronic plus core repulsion) at that twist. Both are relative to
//! their minimum over the scan. The raw π term overbinds the planar form (biphenyl: ~66 kJ/mol
//! planar vs perpendicular, against 6–9 kJ/mol measured, science.md b), so c_conj and s_steric
//! are fitted (`examples/fit_torsion.rs`) to biphenyl's twist (44.4°) and its two barriers
//! (7.88 kJ/mol at 0°, 8.94 kJ/mol at 90°, CCSD(T) best estimates quoted in science.md b).
//!
//! The Boltzmann distribution over the scan uses P(θ) ∝ exp(−E(θ)/RT) (one-dimensional dihedral,
//! no sin θ Jacobian; science.md b), R = 8.314462618·10⁻³ kJ mol⁻¹ K⁻¹ (CODATA 2018).

use crate::chem::Molecule;
use crate::geometry::{
    Coordinates, branch, hydrogen_coordinates, layout, rotate_about_bond, steric, with_hydrogens,
};

use super::build::build_model;
use super::params::PppParams;
use super::{PiError, ScfParams, scf};

/// eV → kJ/mol (CODATA 2018: e·N_A/1000).
pub const EV_TO_KJ_PER_MOL: f64 = 96.485_332_12;
/// Gas constant in kJ mol⁻¹ K⁻¹ (CODATA 2018).
pub const R_KJ_PER_MOL_K: f64 = 8.314_462_618e-3;

/// Settings of the torsion model (defaults from the shipped parameter file).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TorsionParams {
    pub conjugation_scale: f64,
    pub steric_scale: f64,
    pub temperature_k: f64,
}

/// One point of a scan (energies in kJ/mol, relative to the scan minimum of each term).
#[derive(Debug, Clone, PartialEq)]
pub struct TorsionPoint {
    pub theta_deg: f64,
    pub e_pi_raw: f64,
    pub e_steric_raw: f64,
    pub e_total: f64,
    pub weight: f64,
}

/// A scan with its equilibrium angle.
#[derive(Debug, Clone, PartialEq)]
pub struct TorsionProfile {
    pub points: Vec<TorsionPoint>,
    /// Angle of the lowest total energy, refined by a parabola through its neighbours (degrees).
    pub equilibrium_deg: f64,
}

/// Angles (degrees) at which the π energy is computed when the scan is interpolated.
const PI_ANCHORS: [f64; 7] = [0.0, 30.0, 60.0, 90.0, 120.0, 150.0, 180.0];

/// Can the π term of a scan over `grid` (degrees) be interpolated: are all the anchors 0°, 30°,
/// …, 180° on the grid and every angle within 0–180°?
pub fn can_interpolate(grid: &[f64]) -> bool {
    let on_grid = |t: f64| grid.iter().any(|&g| (g - t).abs() < 1e-9);
    PI_ANCHORS.iter().all(|&t| on_grid(t)) && grid.iter().all(|&t| (0.0..=180.0).contains(&t))
}

/// Raw (unscaled) π and steric energies along a scan about `link` = (a, b): the side of b
/// rotates by θ from the planar layout. The steric term is computed at every angle; the π term
/// (one SCF per angle, the cost) only at 0°, 30°, …, 180° when those are on the grid, and in
/// between by interpolation in x = cos²θ through the four anchors of the same quadrant (cubic
/// in x; under β ∝ cos θ the π energy is a smooth even function of cos θ, and the interpolation
/// error is checked against direct SCF in the tests). Other grids are computed point by point
/// ([`can_interpolate`] decides).
pub fn raw_scan(
    mol: &Molecule,
    link: (usize, usize),
    angles_deg: &[f64],
    ppp: &PppParams,
) -> Result<Vec<(f64, f64, f64)>, PiError> {
    let interpolate = can_interpolate(angles_deg);
    raw_scan_with(mol, link, angles_deg, ppp, interpolate, &layout(mol))
}

/// [`raw_scan`] with the π interpolation switched on or off (off: one SCF per angle), from
/// the starting geometry `base` (θ = 0 is `base` itself; other links as they are in it).
pub fn raw_scan_with(
    mol: &Molecule,
    link: (usize, usize),
    angles_deg: &[f64],
    ppp: &PppParams,
    interpolate: bool,
    base: &Coordinates,
) -> Result<Vec<(f64, f64, f64)>, PiError> {
    let place = |t: f64| -> Result<Coordinates, PiError> {
        let mut c = base.clone();
        if !rotate_about_bond(mol, &mut c.points, link.0, link.1, t.to_radians()) {
            return Err(PiError::BadModel("the torsion bond is on a ring".into()));
        }
        Ok(c)
    };
    let mut density = None;
    let mut pi_energy = |t: f64| -> Result<f64, PiError> {
        let built = build_model(mol, &place(t)?, ppp)?;
        // Warm start from the previous angle; a warm start in the wrong basin is covered by
        // `scf`'s last retry, which starts from the core guess.
        let r = scf(
            &built.model,
            &ScfParams {
                initial_density: density.take(),
                ..ScfParams::default()
            },
        );
        match r {
            Ok(r) => {
                density = Some(r.density);
                Ok((r.e_elec + r.e_core) * EV_TO_KJ_PER_MOL)
            }
            // An angle whose SCF does not converge is left out of the profile (NaN energy,
            // zero weight) rather than failing the whole candidate.
            Err(PiError::NotConverged { .. }) => Ok(f64::NAN),
            Err(e) => Err(e),
        }
    };
    let anchors: Vec<f64> = if interpolate {
        PI_ANCHORS
            .iter()
            .map(|&t| pi_energy(t))
            .collect::<Result<_, _>>()?
    } else {
        Vec::new()
    };
    // The hydrogen topology and the moving side are the same at every angle.
    let (mh, _) = with_hydrogens(mol, base);
    let mut side = vec![false; mh.atom_count()];
    for x in branch(&mh, link.0, link.1) {
        side[x] = true;
    }
    let mut out = Vec::with_capacity(angles_deg.len());
    for &t in angles_deg {
        let e_pi = if !interpolate {
            pi_energy(t)?
        } else if let Some(k) = PI_ANCHORS.iter().position(|&a| (a - t).abs() < 1e-9) {
            anchors[k]
        } else {
            let q = if t <= 90.0 { 0 } else { 3 };
            let xs: Vec<f64> = PI_ANCHORS[q..q + 4]
                .iter()
                .map(|a| a.to_radians().cos().powi(2))
                .collect();
            let x = t.to_radians().cos().powi(2);
            (0..4)
                .map(|i| {
                    let li: f64 = (0..4)
                        .filter(|&j| j != i)
                        .map(|j| (x - xs[j]) / (xs[i] - xs[j]))
                        .product();
                    li * anchors[q + i]
                })
                .sum()
        };
        let ch = hydrogen_coordinates(mol, &place(t)?);
        let e_st = steric::side_repulsion(&mh, &ch, &side);
        out.push((t, e_pi, e_st));
    }
    Ok(out)
}

/// Combine a raw scan with the model's scales into a profile with Boltzmann weights.
pub fn profile(raw: &[(f64, f64, f64)], tp: &TorsionParams) -> TorsionProfile {
    // Points with a NaN π energy (SCF not converged there) get zero weight.
    let min_pi = raw
        .iter()
        .map(|r| r.1)
        .filter(|x| x.is_finite())
        .fold(f64::INFINITY, f64::min);
    let min_st = raw.iter().map(|r| r.2).fold(f64::INFINITY, f64::min);
    let mut points: Vec<TorsionPoint> = raw
        .iter()
        .map(|&(t, p, s)| TorsionPoint {
            theta_deg: t,
            e_pi_raw: p - min_pi,
            e_steric_raw: s - min_st,
            e_total: tp.conjugation_scale * (p - min_pi) + tp.steric_scale * (s - min_st),
            weight: 0.0,
        })
        .collect();
    let emin = points
        .iter()
        .map(|p| p.e_total)
        .fold(f64::INFINITY, f64::min);
    for p in points.iter_mut() {
        p.e_total -= emin;
    }
    let rt = R_KJ_PER_MOL_K * tp.temperature_k;
    let boltz = |e: f64| if e.is_finite() { (-e / rt).exp() } else { 0.0 };
    let z: f64 = points.iter().map(|p| boltz(p.e_total)).sum();
    for p in points.iter_mut() {
        p.weight = if z > 0.0 { boltz(p.e_total) / z } else { 0.0 };
    }
    let k = (0..points.len())
        .min_by(|&i, &j| points[i].e_total.total_cmp(&points[j].e_total))
        .expect("non-empty scan");
    let mut eq = points[k].theta_deg;
    if k > 0 && k + 1 < points.len() {
        let (x0, x1, x2) = (
            points[k - 1].theta_deg,
            points[k].theta_deg,
            points[k + 1].theta_deg,
        );
        let (y0, y1, y2) = (
            points[k - 1].e_total,
            points[k].e_total,
            points[k + 1].e_total,
        );
        let denom = (x0 - x1) * (x0 - x2) * (x1 - x2);
        if denom.abs() > 1e-12 {
            let a = (x2 * (y1 - y0) + x1 * (y0 - y2) + x0 * (y2 - y1)) / denom;
            let b = (x2 * x2 * (y0 - y1) + x1 * x1 * (y2 - y0) + x0 * x0 * (y1 - y2)) / denom;
            if a > 0.0 {
                eq = (-b / (2.0 * a)).clamp(x0, x2);
            }
        }
    }
    // A rotor symmetric about 90° (E(θ) = E(180° − θ) on a symmetric grid) has two equivalent
    // minima: report the one at or below 90°.
    let symmetric = points.iter().all(|p| {
        points
            .iter()
            .find(|q| (q.theta_deg - (180.0 - p.theta_deg)).abs() < 1e-9)
            .is_some_and(|q| (q.e_total - p.e_total).abs() < 1e-6)
    });
    if symmetric && eq > 90.0 {
        eq = 180.0 - eq;
    }
    TorsionProfile {
        points,
        equilibrium_deg: eq,
    }
}
