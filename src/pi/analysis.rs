//! Character of excited states from the transition density partitioned by unit: the Ω-matrix
//! analysis of Plasser & Lischka, J. Chem. Theory Comput. 8, 2777 (2012). In the orthogonal ZDO
//! site basis the one-particle transition density is T_μν = Σ_ia X_ia C_μi C_νa and
//! Ω_AB = Σ_{μ∈A, ν∈B} T_μν²; with unit-norm X, Σ_AB Ω_AB = 1. The charge-transfer number is
//! Σ_{A≠B} Ω_AB; the hole on A is Σ_B Ω_AB, the electron on B is Σ_A Ω_AB. All are invariant to
//! renumbering atoms and to the sign of the state.

use nalgebra::DMatrix;

use super::cis::{CisResult, ExcitedState};
use super::scf::ScfResult;

/// Character of one state.
#[derive(Debug, Clone, PartialEq)]
pub struct StateCharacter {
    /// Ω_AB, units × units.
    pub omega: Vec<Vec<f64>>,
    /// Charge-transfer number (0 = local, 1 = full charge transfer).
    pub ct: f64,
    /// Hole population per unit.
    pub hole: Vec<f64>,
    /// Electron population per unit.
    pub electron: Vec<f64>,
}

/// The one-particle transition density in the site basis, T = C_occ X C_virᵀ with X the
/// amplitudes as an occupied × virtual matrix (row-major).
fn transition_density(scf: &ScfResult, cis: &CisResult, state: &ExcitedState) -> DMatrix<f64> {
    let (no, nv) = (cis.occ.len(), cis.vir.len());
    let co = scf.coeffs.select_columns(&cis.occ);
    let cv = scf.coeffs.select_columns(&cis.vir);
    let xm = DMatrix::from_row_slice(no, nv, state.amplitudes.as_slice());
    co * xm * cv.transpose()
}

/// Ω analysis of `state`; `site_unit[s]` is the unit of π site s, `n_units` their count.
pub fn characterise(
    scf: &ScfResult,
    cis: &CisResult,
    state: &ExcitedState,
    site_unit: &[usize],
    n_units: usize,
) -> StateCharacter {
    let n = scf.coeffs.nrows();
    let t = transition_density(scf, cis, state);
    debug_assert_eq!(t.shape(), (n, n));
    let mut omega = vec![vec![0.0; n_units]; n_units];
    for mu in 0..n {
        for nu in 0..n {
            omega[site_unit[mu]][site_unit[nu]] += t[(mu, nu)] * t[(mu, nu)];
        }
    }
    let total: f64 = omega.iter().flatten().sum();
    if total > 0.0 {
        for row in omega.iter_mut() {
            for v in row.iter_mut() {
                *v /= total;
            }
        }
    }
    let mut ct = 0.0;
    let mut hole = vec![0.0; n_units];
    let mut electron = vec![0.0; n_units];
    for a in 0..n_units {
        for b in 0..n_units {
            if a != b {
                ct += omega[a][b];
            }
            hole[a] += omega[a][b];
            electron[b] += omega[a][b];
        }
    }
    StateCharacter {
        omega,
        ct,
        hole,
        electron,
    }
}

/// Hole and electron populations per π site (each sums to 1): hole_μ = Σ_ν T_μν²,
/// electron_ν = Σ_μ T_μν² with T the transition density of [`characterise`], normalised.
/// Invariant to the sign of the state; for drawing where S1 takes its electron from and puts
/// it.
pub fn site_populations(
    scf: &ScfResult,
    cis: &CisResult,
    state: &ExcitedState,
) -> (Vec<f64>, Vec<f64>) {
    let n = scf.coeffs.nrows();
    let t = transition_density(scf, cis, state);
    let mut hole = vec![0.0; n];
    let mut electron = vec![0.0; n];
    for mu in 0..n {
        for nu in 0..n {
            let v = t[(mu, nu)] * t[(mu, nu)];
            hole[mu] += v;
            electron[nu] += v;
        }
    }
    for v in [&mut hole, &mut electron] {
        let total: f64 = v.iter().sum();
        if total > 0.0 {
            v.iter_mut().for_each(|x| *x /= total);
        }
    }
    (hole, electron)
}
