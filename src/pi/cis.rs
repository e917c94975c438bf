//! Configuration interaction singles (Tamm–Dancoff) on a PPP reference, singlets and triplets,
//! with transition dipoles and oscillator strengths.

use nalgebra::{DMatrix, DVector};

use super::scf::{ScfResult, sorted_eigen};
use super::{BOHR_ANGSTROM, HARTREE_EV, PppModel};

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Multiplicity {
    Singlet,
    Triplet,
}

/// CIS settings.
#[derive(Debug, Clone, PartialEq)]
pub struct CisParams {
    /// Occupied orbitals in the active space (from the HOMO down); None = all.
    pub n_occ: Option<usize>,
    /// Virtual orbitals in the active space (from the LUMO up); None = all.
    pub n_vir: Option<usize>,
    /// States kept per multiplicity.
    pub n_roots: usize,
    /// Corrections (both zero = plain CIS).
    pub corrections: Corrections,
    /// Unit of every site (needed by the charge-transfer stabilisation; None = one unit).
    pub site_unit: Option<Vec<usize>>,
}

impl Default for CisParams {
    fn default() -> Self {
        CisParams {
            n_occ: None,
            n_vir: None,
            n_roots: 10,
            corrections: Corrections::default(),
            site_unit: None,
        }
    }
}

/// Two corrections to plain PPP-CIS, both acting inside the CI matrix so that local and
/// charge-transfer configurations still mix (see `data/ppp-params.toml` for the fitted values).
///
/// - Triplet exchange restoration λ: triplets get A_T = A_T(CIS) + 2λ(ia|jb). The added matrix
///   is the exchange coupling whose diagonal 2λK_ia is large where hole and electron share
///   sites (local excitations) and vanishes for charge transfer (K_ia → 0), so it raises local
///   triplets (too low by 1–1.5 eV in Mataga–Nishimoto CIS, science.md a.6) and leaves
///   charge-transfer triplets where they are. λ = 1 would make triplets equal to singlets;
///   the singlet–triplet splitting of a local state becomes 2(1 − λ)K.
/// - Charge-transfer stabilisation Δ_CT (eV): every configuration i→a gets −Δ_CT·τ_ia on the
///   diagonal of both multiplicities, where τ_ia = 1 − Σ_u P_i(u) P_a(u) is the probability that
///   hole and electron sit on different units (P_i(u) = Σ_{μ∈u} C_μi²). It stands for the
///   screening of the electron–hole pair that a bare π model lacks (host polarisation, and the
///   uncertainty of the repulsion formula at 4–8 Å).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Corrections {
    pub triplet_exchange: f64,
    pub ct_stabilisation_ev: f64,
}

/// One excited state.
#[derive(Debug, Clone)]
pub struct ExcitedState {
    pub multiplicity: Multiplicity,
    /// Excitation energy (eV).
    pub energy: f64,
    /// Oscillator strength (0 for triplets).
    pub osc_strength: f64,
    /// Transition dipole (e·Å; zero for triplets).
    pub transition_dipole: [f64; 3],
    /// CIS amplitudes X_ia (unit norm), index i·n_vir_active + a over the active space.
    pub amplitudes: DVector<f64>,
}

/// States of both multiplicities and the active space used.
#[derive(Debug, Clone)]
pub struct CisResult {
    pub singlets: Vec<ExcitedState>,
    pub triplets: Vec<ExcitedState>,
    /// Active occupied orbital indices (ascending) and virtual ones.
    pub occ: Vec<usize>,
    pub vir: Vec<usize>,
}

/// Solve CIS for singlets and triplets by full diagonalisation in the active space.
pub fn cis(model: &PppModel, scf: &ScfResult, params: &CisParams) -> CisResult {
    let n = model.n_sites();
    let nocc = scf.nocc;
    let nvir_all = n - nocc;
    let no = params.n_occ.unwrap_or(nocc).min(nocc);
    let nv = params.n_vir.unwrap_or(nvir_all).min(nvir_all);
    let occ: Vec<usize> = (nocc - no..nocc).collect();
    let vir: Vec<usize> = (nocc..nocc + nv).collect();
    let c = &scf.coeffs;
    let g = &scf.gamma;
    let dim = no * nv;
    if dim == 0 {
        return CisResult {
            singlets: Vec::new(),
            triplets: Vec::new(),
            occ,
            vir,
        };
    }
    // Transition densities on sites: Q_μ,(ia) = C_μi C_μa; (ia|jb) = Qᵀ γ Q.
    let mut q = DMatrix::zeros(n, dim);
    for (ii, &i) in occ.iter().enumerate() {
        for (aa, &a) in vir.iter().enumerate() {
            for mu in 0..n {
                q[(mu, ii * nv + aa)] = c[(mu, i)] * c[(mu, a)];
            }
        }
    }
    let gq = g * &q;
    let iajb = q.transpose() * &gq;
    // (ij|ab) = Oᵀ γ V with O_μ,(ij) = C_μi C_μj and V_μ,(ab) = C_μa C_μb.
    let mut o = DMatrix::zeros(n, no * no);
    for (ii, &i) in occ.iter().enumerate() {
        for (jj, &j) in occ.iter().enumerate() {
            for mu in 0..n {
                o[(mu, ii * no + jj)] = c[(mu, i)] * c[(mu, j)];
            }
        }
    }
    let mut v = DMatrix::zeros(n, nv * nv);
    for (aa, &a) in vir.iter().enumerate() {
        for (bb, &b) in vir.iter().enumerate() {
            for mu in 0..n {
                v[(mu, aa * nv + bb)] = c[(mu, a)] * c[(mu, b)];
            }
        }
    }
    let ijab = o.transpose() * (g * &v);
    let eps = &scf.energies;
    // Charge-transfer probability τ_ia of every configuration (zero without units).
    let mut tau = vec![0.0; dim];
    let cor = params.corrections;
    if let (Some(su), true) = (&params.site_unit, cor.ct_stabilisation_ev != 0.0) {
        let nu = su.iter().max().map_or(0, |m| m + 1);
        let pop = |p: usize| {
            let mut v = vec![0.0; nu];
            for mu in 0..n {
                v[su[mu]] += c[(mu, p)] * c[(mu, p)];
            }
            v
        };
        let pv: Vec<Vec<f64>> = vir.iter().map(|&a| pop(a)).collect();
        for (ii, &i) in occ.iter().enumerate() {
            let pi = pop(i);
            for (aa, pa) in pv.iter().enumerate() {
                let same: f64 = pi.iter().zip(pa).map(|(x, y)| x * y).sum();
                tau[ii * nv + aa] = (1.0 - same).clamp(0.0, 1.0);
            }
        }
    }
    let mut a_s = DMatrix::zeros(dim, dim);
    let mut a_t = DMatrix::zeros(dim, dim);
    for ii in 0..no {
        for aa in 0..nv {
            let r = ii * nv + aa;
            for jj in 0..no {
                for bb in 0..nv {
                    let s = jj * nv + bb;
                    let k = ijab[(ii * no + jj, aa * nv + bb)];
                    let x = iajb[(r, s)];
                    let mut ts = 2.0 * x - k;
                    let mut tt = 2.0 * cor.triplet_exchange * x - k;
                    if r == s {
                        let d = eps[vir[aa]] - eps[occ[ii]] - cor.ct_stabilisation_ev * tau[r];
                        ts += d;
                        tt += d;
                    }
                    a_s[(r, s)] = ts;
                    a_t[(r, s)] = tt;
                }
            }
        }
    }
    let roots = params.n_roots.min(dim);
    let states = |a: DMatrix<f64>, mult: Multiplicity| -> Vec<ExcitedState> {
        let (vals, vecs) = lowest_eigenpairs(a, roots);
        (0..roots)
            .map(|k| {
                let x = vecs.column(k).into_owned();
                let (dip, f) = if mult == Multiplicity::Singlet {
                    transition(model, &q, &x, vals[k])
                } else {
                    ([0.0; 3], 0.0)
                };
                ExcitedState {
                    multiplicity: mult,
                    energy: vals[k],
                    osc_strength: f,
                    transition_dipole: dip,
                    amplitudes: x,
                }
            })
            .collect()
    };
    CisResult {
        singlets: states(a_s, Multiplicity::Singlet),
        triplets: states(a_t, Multiplicity::Triplet),
        occ,
        vir,
    }
}

/// Transition dipole (e·Å) and oscillator strength of a singlet with amplitudes `x`.
fn transition(
    model: &PppModel,
    q: &DMatrix<f64>,
    x: &DVector<f64>,
    energy: f64,
) -> ([f64; 3], f64) {
    // Transition density on sites ρ_μ = √2 Σ_ia X_ia C_μi C_μa.
    let rho = q * x * std::f64::consts::SQRT_2;
    let mut d = [0.0; 3];
    for (mu, r) in model.positions.iter().enumerate() {
        for k in 0..3 {
            d[k] += rho[mu] * r[k];
        }
    }
    let d2_au = (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]) / (BOHR_ANGSTROM * BOHR_ANGSTROM);
    let f = 2.0 / 3.0 * (energy / HARTREE_EV) * d2_au;
    (d, f)
}

/// Dimension above which the lowest roots come from Davidson iteration instead of a full
/// diagonalisation.
pub const DAVIDSON_MIN_DIM: usize = 300;

/// The `k` lowest eigenpairs of the symmetric matrix `a`, ascending: full diagonalisation for
/// small matrices, otherwise Davidson's method (J. Comput. Phys. 17, 87 (1975)) with a diagonal
/// preconditioner, a block of k + 4 vectors started on the lowest diagonal elements (so that
/// near-degenerate roots are not missed), residual norm below 1e-5 eV (eigenvalue error of order the squared residual), and restarts that keep
/// the current Ritz vectors. Checked against full diagonalisation in the tests; if it does not
/// converge in 200 iterations it falls back to the full diagonalisation.
pub fn lowest_eigenpairs(a: DMatrix<f64>, k: usize) -> (DVector<f64>, DMatrix<f64>) {
    let n = a.nrows();
    if n <= DAVIDSON_MIN_DIM || k * 4 >= n {
        return sorted_eigen(a);
    }
    let block = (k + 4).min(n);
    let diag: Vec<f64> = (0..n).map(|i| a[(i, i)]).collect();
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&x, &y| diag[x].total_cmp(&diag[y]).then(x.cmp(&y)));
    let mut basis: Vec<DVector<f64>> = order[..block]
        .iter()
        .map(|&i| {
            let mut v = DVector::zeros(n);
            v[i] = 1.0;
            v
        })
        .collect();
    let max_basis = (block * 10).min(n);
    // A·v for every basis vector, kept so each iteration multiplies only the new vectors.
    let mut a_basis: Vec<DVector<f64>> = basis.iter().map(|b| &a * b).collect();
    for _ in 0..200 {
        let m = basis.len();
        let v = DMatrix::from_columns(&basis);
        let av = DMatrix::from_columns(&a_basis);
        let h = v.transpose() * &av;
        let (theta, s) = sorted_eigen(h);
        let x = &v * &s;
        let ax = &av * &s;
        let mut new_vecs = Vec::new();
        let mut converged = true;
        for j in 0..block.min(m) {
            let r = ax.column(j) - x.column(j) * theta[j];
            if r.norm() > 1e-5 {
                if j < k {
                    converged = false;
                }
                let mut t = DVector::zeros(n);
                for i in 0..n {
                    let d = theta[j] - diag[i];
                    t[i] = r[i]
                        / if d.abs() < 1e-8 {
                            1e-8_f64.copysign(d)
                        } else {
                            d
                        };
                }
                // Preconditioned correction, and the plain residual as a fall-back direction.
                new_vecs.push(t);
                new_vecs.push(r.into_owned());
            }
        }
        if converged {
            let vals = DVector::from_iterator(k, (0..k).map(|j| theta[j]));
            let mut vecs = DMatrix::zeros(n, k);
            for j in 0..k {
                let mut col = x.column(j).into_owned();
                // Sign convention as in `sorted_eigen`: largest-magnitude component positive.
                let big = col.iter().fold(
                    0.0f64,
                    |b, &c| if c.abs() > b.abs() + 1e-12 { c } else { b },
                );
                if big < 0.0 {
                    col *= -1.0;
                }
                vecs.set_column(j, &col);
            }
            return (vals, vecs);
        }
        // Restart when the basis grows too large: keep the Ritz vectors (and their A·x).
        if m + new_vecs.len() > max_basis {
            basis = (0..block.min(m))
                .map(|j| x.column(j).into_owned())
                .collect();
            a_basis = (0..block.min(m))
                .map(|j| ax.column(j).into_owned())
                .collect();
        }
        let before = basis.len();
        for t in new_vecs {
            let n0 = t.norm();
            if n0 == 0.0 || !n0.is_finite() {
                continue;
            }
            let mut t = t / n0;
            for _ in 0..2 {
                for b in &basis {
                    let p = b.dot(&t);
                    t -= b * p;
                }
            }
            let nt = t.norm();
            if nt > 1e-4 {
                let t = t / nt;
                a_basis.push(&a * &t);
                basis.push(t);
            }
        }
        if basis.len() == before {
            // No new direction: cannot improve further.
            break;
        }
    }
    let (vals, vecs) = sorted_eigen(a);
    let kk = k.min(vals.len());
    (
        DVector::from_iterator(kk, (0..kk).map(|j| vals[j])),
        vecs.columns(0, kk).into_owned(),
    )
}
