//! Closed-shell PPP self-consistent field with Pulay DIIS.

use nalgebra::{DMatrix, DVector, SymmetricEigen};

use super::{PiError, PppModel};

/// SCF settings (defaults suit molecules of up to a few hundred π sites).
#[derive(Debug, Clone, PartialEq)]
pub struct ScfParams {
    pub max_iter: usize,
    /// Convergence on the electronic energy change (eV).
    pub energy_tol: f64,
    /// Convergence on the largest density-matrix change.
    pub density_tol: f64,
    /// Fock/error pairs kept for DIIS extrapolation (0 turns DIIS off).
    pub diis_size: usize,
    /// Starting density (warm start across a torsion scan); the core-Hamiltonian guess if None.
    pub initial_density: Option<DMatrix<f64>>,
    /// Level shift (eV) added to the virtual space while iterating (Saunders & Hillier, Int.
    /// J. Quantum Chem. 7, 699 (1973)); it damps occupied–virtual oscillations and leaves the
    /// converged solution unchanged. 0 = off. Without it (and without damping), a failed run is
    /// retried with `RETRY_LEVEL_SHIFT_EV`, then from the core guess with a larger shift and
    /// damping (see [`scf`]).
    pub level_shift: f64,
    /// Density damping while iterating: P ← (1 − d)·P_new + d·P_old (0 = off).
    pub damping: f64,
}

/// Level shift (eV) of the automatic retry of a non-converged SCF.
pub const RETRY_LEVEL_SHIFT_EV: f64 = 2.0;

impl Default for ScfParams {
    fn default() -> Self {
        ScfParams {
            max_iter: 200,
            energy_tol: 1e-9,
            density_tol: 1e-7,
            diis_size: 8,
            initial_density: None,
            level_shift: 0.0,
            damping: 0.0,
        }
    }
}

/// How the SCF went.
#[derive(Debug, Clone, PartialEq)]
pub struct ScfInfo {
    pub iterations: usize,
    pub delta_e: f64,
    pub delta_p: f64,
}

/// A converged closed-shell solution.
#[derive(Debug, Clone)]
pub struct ScfResult {
    /// Orbital energies ε (eV), ascending.
    pub energies: DVector<f64>,
    /// MO coefficients, one column per orbital, in the order of `energies`.
    pub coeffs: DMatrix<f64>,
    /// Density matrix P = 2 C_occ C_occᵀ.
    pub density: DMatrix<f64>,
    pub nocc: usize,
    /// Electronic energy ½ Σ P (h + F) (eV).
    pub e_elec: f64,
    /// Core–core repulsion (eV).
    pub e_core: f64,
    /// Two-centre repulsion matrix used (eV).
    pub gamma: DMatrix<f64>,
    pub info: ScfInfo,
}

/// Eigen-decomposition sorted ascending, each eigenvector's sign fixed so its largest-magnitude
/// component is positive (reproducible output).
pub(crate) fn sorted_eigen(m: DMatrix<f64>) -> (DVector<f64>, DMatrix<f64>) {
    let n = m.nrows();
    let eig = SymmetricEigen::new(m);
    let mut idx: Vec<usize> = (0..n).collect();
    idx.sort_by(|&a, &b| eig.eigenvalues[a].total_cmp(&eig.eigenvalues[b]));
    let vals = DVector::from_iterator(n, idx.iter().map(|&i| eig.eigenvalues[i]));
    let mut vecs = DMatrix::zeros(n, n);
    for (k, &i) in idx.iter().enumerate() {
        let col = eig.eigenvectors.column(i);
        let mut big = 0.0f64;
        for v in col.iter() {
            if v.abs() > big.abs() + 1e-12 {
                big = *v;
            }
        }
        let s = if big < 0.0 { -1.0 } else { 1.0 };
        for r in 0..n {
            vecs[(r, k)] = s * col[r];
        }
    }
    (vals, vecs)
}

fn fock(h: &DMatrix<f64>, gamma: &DMatrix<f64>, p: &DMatrix<f64>) -> DMatrix<f64> {
    let n = h.nrows();
    let mut f = h.clone();
    for i in 0..n {
        // Coulomb: Σ_ν P_νν γ_μν; exchange: −½ P_μν γ_μν.
        let mut j = 0.0;
        for k in 0..n {
            j += p[(k, k)] * gamma[(i, k)];
        }
        f[(i, i)] += j - 0.5 * p[(i, i)] * gamma[(i, i)];
        for k in 0..n {
            if k != i {
                f[(i, k)] -= 0.5 * p[(i, k)] * gamma[(i, k)];
            }
        }
    }
    f
}

fn density(c: &DMatrix<f64>, nocc: usize) -> DMatrix<f64> {
    let occ = c.columns(0, nocc);
    (occ * occ.transpose()) * 2.0
}

/// Solve the closed-shell PPP SCF for `model`.
///
/// # Errors
/// An inconsistent model, an odd electron count, or no convergence within `max_iter` (the
/// caller decides; a non-converged result is never returned as if it were good).
pub fn scf(model: &PppModel, params: &ScfParams) -> Result<ScfResult, PiError> {
    let first = scf_once(model, params);
    if !matches!(first, Err(PiError::NotConverged { .. }))
        || params.level_shift != 0.0
        || params.damping != 0.0
    {
        return first;
    }
    // Retries: a moderate level shift (from the same start), then a large one with damping
    // and no extrapolation from the core-Hamiltonian guess (slow but steady for
    // near-degenerate frontier orbitals; it also recovers a warm start in the wrong basin).
    let retry = scf_once(
        model,
        &ScfParams {
            level_shift: RETRY_LEVEL_SHIFT_EV,
            max_iter: params.max_iter * 2,
            ..params.clone()
        },
    );
    if !matches!(retry, Err(PiError::NotConverged { .. })) {
        return retry;
    }
    scf_once(
        model,
        &ScfParams {
            level_shift: 3.0 * RETRY_LEVEL_SHIFT_EV,
            damping: 0.3,
            diis_size: 0,
            max_iter: params.max_iter * 5,
            initial_density: None,
            ..params.clone()
        },
    )
}

fn scf_once(model: &PppModel, params: &ScfParams) -> Result<ScfResult, PiError> {
    model.check()?;
    let n = model.n_sites();
    let nocc = (model.n_electrons() / 2) as usize;
    let gamma = model.gamma();
    let h = model.core_hamiltonian(&gamma);
    let e_core = model.core_repulsion(&gamma);
    let mut p = match &params.initial_density {
        Some(d) if d.nrows() == n && d.ncols() == n => d.clone(),
        _ => density(&sorted_eigen(h.clone()).1, nocc),
    };
    let mut e_old = f64::INFINITY;
    let mut fs: Vec<DMatrix<f64>> = Vec::new();
    let mut errs: Vec<DMatrix<f64>> = Vec::new();
    let mut last = (f64::INFINITY, f64::INFINITY);
    for it in 1..=params.max_iter {
        let f = fock(&h, &gamma, &p);
        let e = 0.5 * p.component_mul(&(&h + &f)).sum();
        let err = &f * &p - &p * &f;
        let f_use = if params.diis_size > 0 {
            fs.push(f.clone());
            errs.push(err.clone());
            if fs.len() > params.diis_size {
                fs.remove(0);
                errs.remove(0);
            }
            diis(&fs, &errs).unwrap_or(f)
        } else {
            f
        };
        let f_use = if params.level_shift > 0.0 {
            // F + shift·(1 − P/2): virtuals (P/2 projects on the occupied space) move up.
            let mut fs = f_use - &p * (0.5 * params.level_shift);
            for i in 0..n {
                fs[(i, i)] += params.level_shift;
            }
            fs
        } else {
            f_use
        };
        let (_, c) = sorted_eigen(f_use);
        let mut p_new = density(&c, nocc);
        if params.damping > 0.0 {
            p_new = &p_new * (1.0 - params.damping) + &p * params.damping;
        }
        let dp = (&p_new - &p).amax();
        let de = (e - e_old).abs();
        last = (de, dp);
        p = p_new;
        e_old = e;
        if de < params.energy_tol && dp < params.density_tol {
            // Final orbitals from the un-extrapolated Fock matrix of the converged density.
            let f = fock(&h, &gamma, &p);
            let e_elec = 0.5 * p.component_mul(&(&h + &f)).sum();
            let (eps_f, c_f) = sorted_eigen(f);
            return Ok(ScfResult {
                energies: eps_f,
                density: density(&c_f, nocc),
                coeffs: c_f,
                nocc,
                e_elec,
                e_core,
                gamma,
                info: ScfInfo {
                    iterations: it,
                    delta_e: de,
                    delta_p: dp,
                },
            });
        }
    }
    Err(PiError::NotConverged {
        iterations: params.max_iter,
        delta_e: last.0,
        delta_p: last.1,
    })
}

/// Pulay DIIS (Chem. Phys. Lett. 73, 393 (1980)): the combination of stored Fock matrices
/// whose combined error vector is smallest, coefficients summing to one.
fn diis(fs: &[DMatrix<f64>], errs: &[DMatrix<f64>]) -> Option<DMatrix<f64>> {
    let m = fs.len();
    if m < 2 {
        return None;
    }
    let mut b = DMatrix::zeros(m + 1, m + 1);
    for i in 0..m {
        for j in 0..=i {
            let v = errs[i].component_mul(&errs[j]).sum();
            b[(i, j)] = v;
            b[(j, i)] = v;
        }
        b[(i, m)] = -1.0;
        b[(m, i)] = -1.0;
    }
    let mut rhs = DVector::zeros(m + 1);
    rhs[m] = -1.0;
    let sol = b.lu().solve(&rhs)?;
    if sol.iter().any(|x| !x.is_finite()) {
        return None;
    }
    let mut f = DMatrix::zeros(fs[0].nrows(), fs[0].ncols());
    for i in 0..m {
        f += &fs[i] * sol[i];
    }
    Some(f)
}
