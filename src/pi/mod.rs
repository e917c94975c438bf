//! The π tier: Pariser–Parr–Pople (PPP) self-consistent field and configuration interaction
//! singles for singlets and triplets, on an explicit model (sites, coordinates, parameters).
//!
//! This module is pure numerics: it never touches files, threads or the terminal. Atom typing,
//! parameter files and geometry build a [`PppModel`] elsewhere.
//!
//! # Equations (energies in eV, lengths in Å)
//!
//! Closed-shell ZDO Fock matrix (Pariser & Parr, J. Chem. Phys. 21, 466 and 767 (1953); Pople,
//! Trans. Faraday Soc. 49, 1375 (1953); as stated in `shared/science.md` a.1):
//!
//! F_μμ = −I_μ + ½ P_μμ γ_μμ + Σ_{ν≠μ} (P_νν − Z_ν) γ_μν,  F_μν = β_μν − ½ P_μν γ_μν,
//!
//! i.e. core h_μμ = −I_μ − Σ_{ν≠μ} Z_ν γ_μν, h_μν = β_μν, and two-electron integrals
//! (μμ|νν) = γ_μν. Two-centre repulsion: Mataga–Nishimoto γ_μν = e²/(R + a_μν) (Z. Phys. Chem.
//! 13, 140 (1957)) or Ohno γ_μν = e²/√(R² + a_μν²) (Theor. Chim. Acta 2, 219 (1964)), with
//! a_μν = 2e²/(γ_μμ + γ_νν) and e²/(4πε₀) = 14.399645 eV·Å (CODATA 2018).
//!
//! CIS (Tamm–Dancoff): singlets A_ia,jb = δ_ij δ_ab (ε_a − ε_i) + 2(ia|jb) − (ij|ab); triplets
//! A_ia,jb = δ_ij δ_ab (ε_a − ε_i) − (ij|ab), with (pq|rs) = Σ_μν C_μp C_μq C_νr C_νs γ_μν.
//! Singlet transition dipole d = √2 Σ_ia X_ia Σ_μ C_μi C_μa r_μ; oscillator strength
//! f = (2/3) ΔE |d|² in atomic units.
//!
//! When not to trust it: raw Mataga–Nishimoto CIS triplets of local excitations are 1–1.5 eV
//! too low (science.md a.6); under ZDO a perpendicular donor–acceptor bond gives ΔEST = f = 0
//! exactly. Later layers correct and flag both.

pub mod analysis;
pub mod build;
mod cis;
pub mod estimate;
pub mod params;
mod scf;
pub mod torsion;
pub mod typing;

pub use cis::{
    CisParams, CisResult, Corrections, ExcitedState, Multiplicity, cis, lowest_eigenpairs,
};
pub use scf::{ScfInfo, ScfParams, ScfResult, scf};

use thiserror::Error;

/// e²/(4πε₀) in eV·Å (CODATA 2018 exact SI constants and the 2018 fine-structure constant).
pub const E2_EV_ANGSTROM: f64 = 14.399_645;
/// Hartree energy in eV (CODATA 2018).
pub const HARTREE_EV: f64 = 27.211_386_245_988;
/// Bohr radius in Å (CODATA 2018).
pub const BOHR_ANGSTROM: f64 = 0.529_177_210_903;

/// Form of the two-centre repulsion integral.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum GammaForm {
    MatagaNishimoto,
    Ohno,
    /// All two-electron terms off: the Hückel limit (for tests and teaching).
    None,
}

/// An explicit PPP model: one π orbital per site.
#[derive(Debug, Clone, PartialEq)]
pub struct PppModel {
    pub positions: Vec<[f64; 3]>,
    /// Valence-state ionisation potential I_μ (eV).
    pub ip: Vec<f64>,
    /// One-centre repulsion γ_μμ (eV).
    pub gamma_self: Vec<f64>,
    /// Core charge Z_μ: π electrons the site contributes (0, 1 or 2).
    pub core: Vec<f64>,
    /// Resonance integrals of bonded pairs (μ, ν, β in eV).
    pub beta: Vec<(usize, usize, f64)>,
    pub gamma_form: GammaForm,
}

/// Failures of the π engine.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum PiError {
    #[error("model is inconsistent: {0}")]
    BadModel(String),
    #[error("odd number of π electrons ({0}): closed-shell SCF needs an even count")]
    OddElectrons(u32),
    #[error("not parameterised: {0}")]
    NotParameterised(String),
    #[error(
        "SCF not converged after {iterations} iterations (last energy change {delta_e:.2e} eV, density change {delta_p:.2e})"
    )]
    NotConverged {
        iterations: usize,
        delta_e: f64,
        delta_p: f64,
    },
}

impl PppModel {
    pub fn n_sites(&self) -> usize {
        self.positions.len()
    }

    pub fn n_electrons(&self) -> u32 {
        self.core.iter().sum::<f64>().round() as u32
    }

    fn check(&self) -> Result<(), PiError> {
        let n = self.n_sites();
        if n == 0 {
            return Err(PiError::BadModel("no π sites".into()));
        }
        if self.ip.len() != n || self.gamma_self.len() != n || self.core.len() != n {
            return Err(PiError::BadModel("per-site arrays differ in length".into()));
        }
        for &(a, b, _) in &self.beta {
            if a >= n || b >= n || a == b {
                return Err(PiError::BadModel(format!("bad β pair ({a}, {b})")));
            }
        }
        let ne = self.n_electrons();
        if ne % 2 == 1 {
            return Err(PiError::OddElectrons(ne));
        }
        if ne as usize > 2 * n {
            return Err(PiError::BadModel(format!("{ne} π electrons on {n} sites")));
        }
        Ok(())
    }

    /// The two-centre repulsion matrix γ (n × n, eV).
    pub fn gamma(&self) -> nalgebra::DMatrix<f64> {
        let n = self.n_sites();
        let mut g = nalgebra::DMatrix::zeros(n, n);
        if self.gamma_form == GammaForm::None {
            return g;
        }
        for i in 0..n {
            g[(i, i)] = self.gamma_self[i];
            for j in 0..i {
                let d = &self.positions;
                let r = ((d[i][0] - d[j][0]).powi(2)
                    + (d[i][1] - d[j][1]).powi(2)
                    + (d[i][2] - d[j][2]).powi(2))
                .sqrt();
                let a = 2.0 * E2_EV_ANGSTROM / (self.gamma_self[i] + self.gamma_self[j]);
                let v = match self.gamma_form {
                    GammaForm::MatagaNishimoto => E2_EV_ANGSTROM / (r + a),
                    GammaForm::Ohno => E2_EV_ANGSTROM / (r * r + a * a).sqrt(),
                    GammaForm::None => 0.0,
                };
                g[(i, j)] = v;
                g[(j, i)] = v;
            }
        }
        g
    }

    /// Core Hamiltonian h (eV).
    pub fn core_hamiltonian(&self, gamma: &nalgebra::DMatrix<f64>) -> nalgebra::DMatrix<f64> {
        let n = self.n_sites();
        let mut h = nalgebra::DMatrix::zeros(n, n);
        for i in 0..n {
            let mut v = -self.ip[i];
            for j in 0..n {
                if j != i {
                    v -= self.core[j] * gamma[(i, j)];
                }
            }
            h[(i, i)] = v;
        }
        for &(a, b, beta) in &self.beta {
            h[(a, b)] = beta;
            h[(b, a)] = beta;
        }
        h
    }

    /// Core–core repulsion Σ_{μ<ν} Z_μ Z_ν γ_μν (eV).
    pub fn core_repulsion(&self, gamma: &nalgebra::DMatrix<f64>) -> f64 {
        let n = self.n_sites();
        let mut e = 0.0;
        for i in 0..n {
            for j in 0..i {
                e += self.core[i] * self.core[j] * gamma[(i, j)];
            }
        }
        e
    }
}
