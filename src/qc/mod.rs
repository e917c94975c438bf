//! Readers for the excited-state sections and final geometry of quantum-chemistry output files,
//! the neutral results table, and matching results to candidates ([`matching`]).
//!
//! # Reading an output file
//!
//! [`read_str`] parses text already in memory (pure, no I/O); [`read_path`] is the thin file
//! wrapper. The program is recognised from the content (banner lines), never from the file name.
//! Both return the [`QcResult`] plus [`Diagnostic`]s (severity, 1-based line, message), or a
//! [`QcError`] that names the file, the line where known and what was expected:
//!
//! - a file of no recognised program → [`QcError::UnknownFormat`];
//! - a file of a recognised program without any excited-state results (a ground-state single
//!   point, an optimisation) → [`QcError::NoExcitedStates`], which still carries the last geometry
//!   found, so a caller can use it;
//! - a file that ends before the program's normal-termination line (killed job, copy cut short)
//!   gives a result with `partial: true` and a warning diagnostic at the last line; states cut in
//!   the middle of their printout are skipped with a warning. Nothing panics, whatever the bytes.
//!
//! A file may hold several calculations (concatenated jobs, Gaussian `--Link1--`, ADF's atomic
//! fragment runs before the molecule): each is one [`Calculation`] with its own states, method
//! and last geometry. [`QcResult::primary`] is the last calculation with excited states (for ADF
//! the molecule's run). States are numbered in file order within their calculation; they are not
//! sorted by energy (DALTON prints them symmetry by symmetry, ORCA singlets before triplets, Q-Chem
//! triplets before singlets).
//!
//! # What is read, per program
//!
//! | program | states | oscillator strength | multiplicity | geometry |
//! |---|---|---|---|---|
//! | Gaussian | `Excited State   n:  Singlet-BU  E eV ... f=` lines; the last printout of a calculation (TD optimisations reprint them) | `f=` | `Singlet`/`Triplet`/…, or the spin label `3.000-A` of unrestricted runs rounded when within 0.1 | last `Standard`/`Input`/`Z-Matrix orientation` table (Å) |
//! | ORCA | `STATE  n:  E= … au  … eV  … cm**-1` blocks under `EXCITED STATES (SINGLETS)`/`(TRIPLETS)` (energy from cm⁻¹), `Symmetry:` lines | `ABSORPTION SPECTRUM VIA TRANSITION ELECTRIC DIPOLE MOMENTS`, rows matched to states by energy (ORCA ≤ 5 and ORCA 6 `0-1A -> 1-1A` rows); triplets get 0 | block title, or ORCA 6 `Mult`; unrestricted blocks from ⟨S²⟩ | last `CARTESIAN COORDINATES (ANGSTROEM)` |
//! | Q-Chem | `Excited state   n: excitation energy (eV) =` blocks under the `… Excitation Energies` title (CIS, TDDFT/TDA, TDDFT/RPA) | `Strength   :` | `Multiplicity:` line; ⟨S²⟩ for unrestricted | last `Standard Nuclear Orientation (Angstroms)` |
//! | NWChem | `Root   n singlet bu   … a.u.   … eV` lines | `Total Oscillator Strength` (else `Oscillator Strength`) | `singlet`/`triplet` word | last `Output coordinates in angstroms` (element from the nuclear charge) |
//! | GAMESS (US) | `STATE #   n  ENERGY =  … EV` blocks under `SINGLET`/`TRIPLET EXCITATIONS`; else the `SUMMARY OF TDDFT RESULTS` table; else the `… EXCITATION ENERGIES` table | `OSCILLATOR STRENGTH =` / table column | block title / table label prefix | last `COORDINATES (BOHR)` or `COORDINATES OF ALL ATOMS ARE (ANGS)` |
//! | Firefly | the `TDDFT EXCITATION ENERGIES` table (labels `3BU`, energy from cm⁻¹) or GAMESS-style blocks | `OSC. STR.` column | label prefix digit | as GAMESS |
//! | ADF | `Final excitation energies` tables, one per symmetry (`Symmetry B.u`), or one table with a symmetry column | `f` column | `Type of excitations = SINGLET-SINGLET`/`SINGLET-TRIPLET` | last `ATOMS` table in Å; one calculation per `Amsterdam Density Functional` run |
//! | DALTON | `@ Excited state no:  n in symmetry s ( Bu )` blocks with the eV line | sum of the `@ Oscillator strength (LENGTH)` lines of the state (one per dipole component, as cclib sums them); 0 for states of symmetries without a dipole component when others have one | `triplet = F/T` of the operator section | the echoed `.mol` input (`Atomtypes=`, `Charge= Atoms=` groups, Å when `Angstrom` is given, else bohr) |
//! | Jaguar | `Excited State   n:   E eV` blocks | `Oscillator strength, f=` | a `singlet`/`triplet` word on the state line; otherwise inferred singlet when the ground state has multiplicity 1 and the file never mentions triplets (Info diagnostic) | last `… geometry:` table (`angstroms`/`bohr` line) |
//! | Turbomole (escf) | `n singlet a excitation` blocks, `Excitation energy / eV:` | first `length representation:` after `Oscillator strength:` | `singlet`/`triplet` word | `atomic coordinates` table (bohr) |
//!
//! Files that give only symmetry labels (GAMESS summary table, ADF without the excitation type
//! line) get `multiplicity: None`; nothing is guessed there.
//!
//! Method: the text the file states — Gaussian's route line, ORCA's `!` keyword lines with TDA or
//! RPA, Q-Chem's `method`/`exchange` and `basis` with the excitation title, NWChem's calculation type
//! and functional, GAMESS `$CONTRL`/`$TDDFT` cards, Jaguar's `SCF calculation type`, the DALTON
//! and Turbomole functional lines, ADF's XC setting.
//!
//! # The neutral results table
//!
//! See [`table`]: a CSV with columns `candidate, kind, method, conditions, state_label,
//! multiplicity, energy_ev, osc_strength`, for results from any source (other programs, the
//! literature, measurements).

mod adf;
mod dalton;
mod gamess;
mod gaussian;
mod jaguar;
pub mod matching;
mod nwchem;
mod orca;
mod qchem;
pub mod table;
mod text;
mod turbomole;

use std::fmt;
use std::path::Path;

use serde::Serialize;
use thiserror::Error;

/// Wavenumbers per electronvolt, CODATA 2018: 1 eV = 8065.543937 cm⁻¹.
pub const CM1_PER_EV: f64 = 8_065.543_937;
/// The bohr radius in ångström, CODATA 2018: a₀ = 0.529177210903 Å.
pub const BOHR_ANGSTROM: f64 = 0.529_177_210_903;
/// The hartree in electronvolts, CODATA 2018: Eₕ = 27.211386245988 eV.
pub const HARTREE_EV: f64 = 27.211_386_245_988;

/// The program that wrote an output file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
pub enum Program {
    Gaussian,
    Orca,
    QChem,
    NwChem,
    /// GAMESS (US).
    Gamess,
    /// Firefly (formerly PC GAMESS), a GAMESS (US) derivative.
    Firefly,
    Adf,
    Dalton,
    Jaguar,
    /// Turbomole's `escf` module.
    Turbomole,
}

impl fmt::Display for Program {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Program::Gaussian => "Gaussian",
            Program::Orca => "ORCA",
            Program::QChem => "Q-Chem",
            Program::NwChem => "NWChem",
            Program::Gamess => "GAMESS (US)",
            Program::Firefly => "Firefly",
            Program::Adf => "ADF",
            Program::Dalton => "DALTON",
            Program::Jaguar => "Jaguar",
            Program::Turbomole => "Turbomole",
        })
    }
}

/// One excited state as the file gives it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ExcitedState {
    /// 1-based position in file order within its calculation.
    pub index: usize,
    /// Spin multiplicity (1 singlet, 3 triplet, …) when the file states it.
    pub multiplicity: Option<u8>,
    /// Symmetry label as printed (ADF's `B.u` written `Bu`); `None` when the file gives none or
    /// an unknown one (Gaussian `?Sym`).
    pub symmetry: Option<String>,
    /// Vertical excitation energy above the reference state, eV.
    pub energy_ev: f64,
    /// Oscillator strength (length gauge where the program prints several).
    pub osc_strength: Option<f64>,
    /// The file's own label text for the state (e.g. `Singlet-BU`, `singlet bu`, `3BU`).
    pub label: String,
}

/// Atoms and Cartesian coordinates.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Geometry {
    /// Element symbols (`C`, `Cl`), in file order.
    pub elements: Vec<String>,
    /// Atomic numbers, parallel to `elements` (0 for an atom the file names with no element).
    pub atomic_numbers: Vec<u8>,
    /// Coordinates in Å, parallel to `elements`.
    pub coords_angstrom: Vec<[f64; 3]>,
}

impl Geometry {
    /// Number of atoms.
    pub fn natom(&self) -> usize {
        self.elements.len()
    }
}

/// One calculation (job, link, run) of a file.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Calculation {
    /// Method as the file states it (functional, basis, TDA/RPA).
    pub method: Option<String>,
    /// Excited states in file order.
    pub states: Vec<ExcitedState>,
    /// The last geometry printed in this calculation.
    pub geometry: Option<Geometry>,
}

/// Everything read from one output file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct QcResult {
    pub program: Program,
    pub version: Option<String>,
    /// Method of the first calculation that states one.
    pub method: Option<String>,
    pub calculations: Vec<Calculation>,
    /// The file ends before the program's normal termination (results may be incomplete).
    pub partial: bool,
}

impl QcResult {
    /// The last calculation with excited states (the molecule's run in an ADF file with
    /// fragment runs; the last job of concatenated jobs).
    pub fn primary(&self) -> Option<&Calculation> {
        self.calculations
            .iter()
            .rev()
            .find(|c| !c.states.is_empty())
    }
}

/// How serious a diagnostic is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
pub enum Severity {
    Info,
    Warning,
    Error,
}

/// A note about the input that did not stop reading.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Diagnostic {
    pub severity: Severity,
    /// 1-based line number, when the note is about one line.
    pub line: Option<usize>,
    pub message: String,
}

impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let sev = match self.severity {
            Severity::Info => "info",
            Severity::Warning => "warning",
            Severity::Error => "error",
        };
        match self.line {
            Some(l) => write!(f, "{sev}: line {l}: {}", self.message),
            None => write!(f, "{sev}: {}", self.message),
        }
    }
}

/// The one error type of the `qc` layer.
#[derive(Debug, Error)]
pub enum QcError {
    #[error("{file}: cannot read: {source}")]
    Io {
        file: String,
        #[source]
        source: std::io::Error,
    },
    #[error(
        "{file}: not a recognised quantum-chemistry output (expected the banner of Gaussian, ORCA, \
         Q-Chem, NWChem, GAMESS, Firefly, ADF, DALTON, Jaguar or Turbomole)"
    )]
    UnknownFormat { file: String },
    #[error(
        "{file}: {program} output has no excited-state results (expected an excited-state section, \
         e.g. TD-DFT){}",
        if *truncated { "; the file also ends before normal termination" } else { "" }
    )]
    NoExcitedStates {
        file: String,
        program: Program,
        /// The last geometry in the file, if any.
        geometry: Option<Box<Geometry>>,
        /// The file ends before the program's normal termination.
        truncated: bool,
    },
    #[error("{file}: line {line}: expected {expected}")]
    Malformed {
        file: String,
        line: usize,
        expected: String,
    },
}

/// Reading options.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct ReadOptions {
    /// Turn the first error diagnostic into a [`QcError::Malformed`] instead of skipping.
    /// Default `false`: skip and report.
    pub strict: bool,
}

/// Result of reading one output file.
pub type ReadOutcome = Result<(QcResult, Vec<Diagnostic>), QcError>;

/// Recognise the program from the text: the first line that carries a program's banner wins.
pub fn detect(text: &str) -> Option<Program> {
    text.lines().find_map(detect_line)
}

fn detect_line(line: &str) -> Option<Program> {
    // Firefly's banner also mentions GAMESS, so it is tested first.
    if line.contains("Firefly version") || line.contains("PC GAMESS version") {
        Some(Program::Firefly)
    } else if line.contains("GAMESS VERSION =") {
        Some(Program::Gamess)
    } else if line.contains("Entering Gaussian System")
        || line.contains("Gaussian, Inc.  All Rights Reserved")
    {
        Some(Program::Gaussian)
    } else if line.contains("* O   R   C   A *") {
        Some(Program::Orca)
    } else if line.contains("Welcome to Q-Chem") {
        Some(Program::QChem)
    } else if line.contains("Northwest Computational Chemistry Package") {
        Some(Program::NwChem)
    } else if line.contains("Amsterdam Density Functional") {
        Some(Program::Adf)
    } else if line.contains("This is output from DALTON") {
        Some(Program::Dalton)
    } else if line.contains("Jaguar version") {
        Some(Program::Jaguar)
    } else if line.contains(": TURBOMOLE") || line.contains("TURBOMOLE rev.") {
        Some(Program::Turbomole)
    } else {
        None
    }
}

/// Read an output file from disk (lossy UTF-8, so binary bytes cannot fail the read).
pub fn read_path(path: impl AsRef<Path>) -> ReadOutcome {
    read_path_with(path, ReadOptions::default())
}

/// [`read_path`] with options.
pub fn read_path_with(path: impl AsRef<Path>, options: ReadOptions) -> ReadOutcome {
    let (name, text) = read_lossy(path.as_ref())?;
    read_str_with(&text, &name, options)
}

/// A file's display name and its text (lossy UTF-8: binary bytes cannot fail the read).
pub(crate) fn read_lossy(path: &Path) -> Result<(String, String), QcError> {
    let name = path.display().to_string();
    let bytes = std::fs::read(path).map_err(|source| QcError::Io {
        file: name.clone(),
        source,
    })?;
    let text = String::from_utf8_lossy(&bytes).into_owned();
    Ok((name, text))
}

/// Parse the text of an output file; `name` is used in errors only.
pub fn read_str(text: &str, name: &str) -> ReadOutcome {
    read_str_with(text, name, ReadOptions::default())
}

/// [`read_str`] with options.
pub fn read_str_with(text: &str, name: &str, options: ReadOptions) -> ReadOutcome {
    let program = detect(text).ok_or_else(|| QcError::UnknownFormat {
        file: name.to_string(),
    })?;
    let lines = text::Lines::new(text);
    let mut b = text::Builder::new(program);
    match program {
        Program::Gaussian => gaussian::parse(&lines, &mut b),
        Program::Orca => orca::parse(&lines, &mut b),
        Program::QChem => qchem::parse(&lines, &mut b),
        Program::NwChem => nwchem::parse(&lines, &mut b),
        Program::Gamess | Program::Firefly => gamess::parse(&lines, &mut b),
        Program::Adf => adf::parse(&lines, &mut b),
        Program::Dalton => dalton::parse(&lines, &mut b),
        Program::Jaguar => jaguar::parse(&lines, &mut b),
        Program::Turbomole => turbomole::parse(&lines, &mut b),
    }
    b.finish(name, lines.len(), options)
}
