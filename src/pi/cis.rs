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

/// Solve CIS for singlets and triplets in the active space: full diagonalisation of the CI
/// matrix up to `DAVIDSON_MIN_DIM` configurations, above it Davidson iteration on a direct
/// σ-vector built from γ (no CI matrix, O(n³) per vector).
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
    let co = c.columns(nocc - no, no).into_owned();
    let cv = c.columns(nocc, nv).into_owned();
    let eps = &scf.energies;
    let cor = params.corrections;
    // Orbital-energy differences with the charge-transfer stabilisation −Δ_CT·τ_ia, where τ_ia
    // is the probability that hole and electron sit on different units (zero without units).
    let mut de = DVector::zeros(dim);
    let unit_pop = params
        .site_unit
        .as_ref()
        .filter(|_| cor.ct_stabilisation_ev != 0.0)
        .map(|su| {
            let nu = su.iter().max().map_or(0, |m| m + 1);
            let pop = |m: &DMatrix<f64>| {
                let mut p = DMatrix::zeros(nu, m.ncols());
                for k in 0..m.ncols() {
                    for mu in 0..n {
                        p[(su[mu], k)] += m[(mu, k)] * m[(mu, k)];
                    }
                }
                p
            };
            (pop(&co), pop(&cv))
        });
    for ii in 0..no {
        for aa in 0..nv {
            let mut d = eps[vir[aa]] - eps[occ[ii]];
            if let Some((po, pv)) = &unit_pop {
                let same: f64 = po.column(ii).dot(&pv.column(aa));
                d -= cor.ct_stabilisation_ev * (1.0 - same).clamp(0.0, 1.0);
            }
            de[ii * nv + aa] = d;
        }
    }
    let roots = params.n_roots.min(dim);
    let coulomb = [
        (Multiplicity::Singlet, 2.0),
        (Multiplicity::Triplet, 2.0 * cor.triplet_exchange),
    ];
    let solved: Vec<(Multiplicity, DVector<f64>, DMatrix<f64>)> = if dim <= DAVIDSON_MIN_DIM
        || roots * 4 >= dim
    {
        let (iajb, ijab) = dense_integrals(&co, &cv, g);
        coulomb
            .iter()
            .map(|&(mult, cj)| {
                let mut a = DMatrix::zeros(dim, dim);
                for ii in 0..no {
                    for aa in 0..nv {
                        let r = ii * nv + aa;
                        for jj in 0..no {
                            for bb in 0..nv {
                                let s = jj * nv + bb;
                                a[(r, s)] = cj * iajb[(r, s)] - ijab[(ii * no + jj, aa * nv + bb)];
                            }
                        }
                        a[(r, r)] += de[r];
                    }
                }
                let (vals, vecs) = truncate(sorted_eigen(a), roots);
                (mult, vals, vecs)
            })
            .collect()
    } else {
        let op = Sigma {
            co: &co,
            cv: &cv,
            gamma: g,
            de: &de,
        };
        let (j_diag, k_diag) = op.diagonal_integrals();
        coulomb
            .iter()
            .map(|&(mult, cj)| {
                let diag: Vec<f64> = (0..dim)
                    .map(|r| de[r] + cj * j_diag[r] - k_diag[r])
                    .collect();
                let (vals, vecs) =
                    davidson(|x| op.apply(x, cj), &diag, roots).unwrap_or_else(|| {
                        let mut a = op.apply(&DMatrix::identity(dim, dim), cj);
                        a = (&a + a.transpose()) * 0.5;
                        truncate(sorted_eigen(a), roots)
                    });
                (mult, vals, vecs)
            })
            .collect()
    };
    let mut out = CisResult {
        singlets: Vec::new(),
        triplets: Vec::new(),
        occ,
        vir,
    };
    for (mult, vals, vecs) in solved {
        let states: Vec<ExcitedState> = (0..vals.len())
            .map(|k| {
                let x = vecs.column(k).into_owned();
                let (dip, f) = if mult == Multiplicity::Singlet {
                    transition(model, &co, &cv, &x, vals[k])
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
            .collect();
        match mult {
            Multiplicity::Singlet => out.singlets = states,
            Multiplicity::Triplet => out.triplets = states,
        }
    }
    out
}

/// (ia|jb) (dim × dim) and (ij|ab) (no² × nv²) for the dense CI matrix.
fn dense_integrals(
    co: &DMatrix<f64>,
    cv: &DMatrix<f64>,
    g: &DMatrix<f64>,
) -> (DMatrix<f64>, DMatrix<f64>) {
    let (n, no, nv) = (co.nrows(), co.ncols(), cv.ncols());
    // Q_μ,(ia) = C_μi C_μa; (ia|jb) = Qᵀ γ Q.
    let q = pair_products(co, cv);
    let iajb = q.transpose() * (g * &q);
    // (ij|ab) = Oᵀ γ V with O_μ,(ij) = C_μi C_μj and V_μ,(ab) = C_μa C_μb.
    let o = pair_products(co, co);
    let v = pair_products(cv, cv);
    debug_assert_eq!(o.shape(), (n, no * no));
    debug_assert_eq!(v.shape(), (n, nv * nv));
    (iajb, o.transpose() * (g * &v))
}

/// Columns p·m + q = element-wise products of column p of `a` and column q of `b`.
fn pair_products(a: &DMatrix<f64>, b: &DMatrix<f64>) -> DMatrix<f64> {
    let (n, na, nb) = (a.nrows(), a.ncols(), b.ncols());
    let mut q = DMatrix::zeros(n, na * nb);
    for p in 0..na {
        for r in 0..nb {
            let col = a.column(p).component_mul(&b.column(r));
            q.set_column(p * nb + r, &col);
        }
    }
    q
}

/// The CIS operator applied without building its matrix. With Y = C_occ X C_virᵀ (X the
/// amplitudes as an occupied × virtual matrix):
/// Σ_jb (ia|jb) X_jb = (C_occᵀ diag(γ·diag Y) C_vir)_ia and
/// Σ_jb (ij|ab) X_jb = (C_occᵀ (γ ∘ Y) C_vir)_ia.
struct Sigma<'a> {
    co: &'a DMatrix<f64>,
    cv: &'a DMatrix<f64>,
    gamma: &'a DMatrix<f64>,
    de: &'a DVector<f64>,
}

impl Sigma<'_> {
    /// (ia|ia) and (ii|aa) for every configuration (the diagonal, for the preconditioner).
    fn diagonal_integrals(&self) -> (Vec<f64>, Vec<f64>) {
        let (no, nv) = (self.co.ncols(), self.cv.ncols());
        let mut j = vec![0.0; no * nv];
        for ii in 0..no {
            let mut qi = self.cv.clone();
            for (mu, mut row) in qi.row_iter_mut().enumerate() {
                row *= self.co[(mu, ii)];
            }
            let gq = self.gamma * &qi;
            for aa in 0..nv {
                j[ii * nv + aa] = qi.column(aa).dot(&gq.column(aa));
            }
        }
        let d_o = self.co.component_mul(self.co);
        let d_v = self.cv.component_mul(self.cv);
        let k = d_o.transpose() * self.gamma * d_v;
        let k_flat = (0..no * nv).map(|r| k[(r / nv, r % nv)]).collect();
        (j, k_flat)
    }

    /// The operator (with Coulomb factor `cj`: 2 for singlets, 2λ for triplets) on every
    /// column of `x`.
    fn apply(&self, x: &DMatrix<f64>, cj: f64) -> DMatrix<f64> {
        let (no, nv) = (self.co.ncols(), self.cv.ncols());
        let mut out = DMatrix::zeros(x.nrows(), x.ncols());
        for (k, col) in x.column_iter().enumerate() {
            // Row-major amplitude index i·nv + a → the no × nv matrix X.
            let xm = DMatrix::from_row_slice(no, nv, col.as_slice());
            let y = self.co * xm * self.cv.transpose();
            let gd = self.gamma * y.diagonal();
            let mut cvg = self.cv.clone();
            for (mu, mut row) in cvg.row_iter_mut().enumerate() {
                row *= gd[mu];
            }
            let j = self.co.transpose() * cvg;
            let kx = self.co.transpose() * self.gamma.component_mul(&y) * self.cv;
            for ii in 0..no {
                for aa in 0..nv {
                    let r = ii * nv + aa;
                    out[(r, k)] = self.de[r] * col[r] + cj * j[(ii, aa)] - kx[(ii, aa)];
                }
            }
        }
        out
    }
}

/// Transition dipole (e·Å) and oscillator strength of a singlet with amplitudes `x`.
fn transition(
    model: &PppModel,
    co: &DMatrix<f64>,
    cv: &DMatrix<f64>,
    x: &DVector<f64>,
    energy: f64,
) -> ([f64; 3], f64) {
    // Transition density on sites ρ_μ = √2 Σ_ia X_ia C_μi C_μa = √2 (C_occ X C_virᵀ)_μμ.
    let xm = DMatrix::from_row_slice(co.ncols(), cv.ncols(), x.as_slice());
    let rho = (co * xm * cv.transpose()).diagonal() * std::f64::consts::SQRT_2;
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

/// Dimension above which the lowest roots come from Davidson iteration on a direct σ-vector
/// (no CI matrix is built) instead of a full diagonalisation of the dense matrix.
pub const DAVIDSON_MIN_DIM: usize = 60;

/// Residual norm (eV) at which a Davidson root counts as converged; the eigenvalue error is of
/// the order of its square.
const DAVIDSON_TOL: f64 = 1e-4;

/// The `k` lowest eigenpairs of the symmetric matrix `a`, ascending: full diagonalisation for
/// small matrices, otherwise `davidson` on the dense matrix (falls back to the full
/// diagonalisation if it does not converge). Sign convention of the vectors: largest-magnitude
/// component positive.
pub fn lowest_eigenpairs(a: DMatrix<f64>, k: usize) -> (DVector<f64>, DMatrix<f64>) {
    let n = a.nrows();
    if n <= DAVIDSON_MIN_DIM || k * 4 >= n {
        return truncate(sorted_eigen(a), k);
    }
    let diag: Vec<f64> = (0..n).map(|i| a[(i, i)]).collect();
    davidson(|v| &a * v, &diag, k).unwrap_or_else(|| truncate(sorted_eigen(a), k))
}

fn truncate((vals, vecs): (DVector<f64>, DMatrix<f64>), k: usize) -> (DVector<f64>, DMatrix<f64>) {
    let k = k.min(vals.len());
    (
        DVector::from_iterator(k, (0..k).map(|j| vals[j])),
        vecs.columns(0, k).into_owned(),
    )
}

/// Block Davidson (J. Comput. Phys. 17, 87 (1975)) for the `k` lowest roots of a symmetric
/// operator given as `apply` (a block of column vectors in, the operator times each out) and
/// its diagonal. Diagonal preconditioner; start vectors on the k + 4 lowest diagonal elements,
/// each with a small fixed pseudo-random admixture so that no symmetry sector is unreachable;
/// the projected matrix grows by the new vectors only; restart to the current Ritz vectors
/// when the basis exceeds 8 blocks. Converged when every residual norm is below
/// `DAVIDSON_TOL` (1e-4 eV). `None` when 300 iterations do not converge or no new direction
/// is left.
pub fn davidson<F>(apply: F, diag: &[f64], k: usize) -> Option<(DVector<f64>, DMatrix<f64>)>
where
    F: Fn(&DMatrix<f64>) -> DMatrix<f64>,
{
    let n = diag.len();
    let block = (k + 4).min(n);
    let max_basis = (block * 8).min(n);
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&x, &y| diag[x].total_cmp(&diag[y]).then(x.cmp(&y)));
    // Deterministic admixture (a linear congruential sequence; any fixed vector works).
    let mut seed: u64 = 0x9e37_79b9_7f4a_7c15;
    let mut noise = move || {
        seed = seed
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        ((seed >> 11) as f64 / (1u64 << 53) as f64) - 0.5
    };
    let mut start = DMatrix::zeros(n, block);
    for (j, &i) in order[..block].iter().enumerate() {
        for r in 0..n {
            start[(r, j)] = 1e-3 * noise();
        }
        start[(i, j)] += 1.0;
    }
    let mut v = orthonormalise(&DMatrix::zeros(n, 0), start);
    let mut av = apply(&v);
    let mut h = v.tr_mul(&av);
    for _ in 0..300 {
        let m = v.ncols();
        let hs = (&h + h.transpose()) * 0.5;
        let (theta, s) = sorted_eigen(hs);
        let keep = block.min(m);
        let sk = s.columns(0, keep);
        let x = &v * sk;
        let ax = &av * sk;
        let mut corr: Vec<DVector<f64>> = Vec::new();
        for j in 0..k.min(keep) {
            let r = ax.column(j) - x.column(j) * theta[j];
            if r.norm() > DAVIDSON_TOL {
                let mut t = DVector::zeros(n);
                for i in 0..n {
                    let d = theta[j] - diag[i];
                    t[i] = r[i]
                        / if d.abs() < 1e-6 {
                            1e-6_f64.copysign(d)
                        } else {
                            d
                        };
                }
                corr.push(t);
            }
        }
        if corr.is_empty() {
            let mut vecs = x.columns(0, k).into_owned();
            for j in 0..k {
                let big = vecs.column(j).iter().fold(0.0f64, |b, &c| {
                    if c.abs() > b.abs() + 1e-12 { c } else { b }
                });
                if big < 0.0 {
                    vecs.column_mut(j).neg_mut();
                }
            }
            return Some((DVector::from_iterator(k, (0..k).map(|j| theta[j])), vecs));
        }
        if m + corr.len() > max_basis {
            v = x;
            av = ax;
            h = DMatrix::from_diagonal(&DVector::from_iterator(keep, (0..keep).map(|j| theta[j])));
        }
        let new = orthonormalise(&v, DMatrix::from_columns(&corr));
        if new.ncols() == 0 {
            return None;
        }
        let anew = apply(&new);
        let m = v.ncols();
        let p = new.ncols();
        let top = v.tr_mul(&anew);
        let corner = new.tr_mul(&anew);
        let mut h2 = DMatrix::zeros(m + p, m + p);
        h2.view_mut((0, 0), (m, m)).copy_from(&h);
        h2.view_mut((0, m), (m, p)).copy_from(&top);
        h2.view_mut((m, 0), (p, m)).copy_from(&top.transpose());
        h2.view_mut((m, m), (p, p)).copy_from(&corner);
        h = h2;
        v = v.resize_horizontally(m + p, 0.0);
        v.columns_mut(m, p).copy_from(&new);
        av = av.resize_horizontally(m + p, 0.0);
        av.columns_mut(m, p).copy_from(&anew);
    }
    None
}

/// Columns of `new` made orthonormal to `basis` and to each other (two Gram–Schmidt passes);
/// columns that vanish are dropped.
fn orthonormalise(basis: &DMatrix<f64>, new: DMatrix<f64>) -> DMatrix<f64> {
    let mut out: Vec<DVector<f64>> = Vec::new();
    for col in new.column_iter() {
        let n0 = col.norm();
        if n0 == 0.0 || !n0.is_finite() {
            continue;
        }
        let mut t: DVector<f64> = col / n0;
        for _ in 0..2 {
            if basis.ncols() > 0 {
                let proj = basis.tr_mul(&t);
                t.gemv(-1.0, basis, &proj, 1.0);
            }
            for b in &out {
                let p = b.dot(&t);
                t -= b * p;
            }
        }
        let nt = t.norm();
        if nt > 1e-4 {
            out.push(t / nt);
        }
    }
    if out.is_empty() {
        DMatrix::zeros(basis.nrows().max(new.nrows()), 0)
    } else {
        DMatrix::from_columns(&out)
    }
}
