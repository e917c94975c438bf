//! Errors of the chemistry layer: every SMILES problem carries the position in the input.

use thiserror::Error;

/// What went wrong while reading a SMILES string.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
pub enum SmilesErrorKind {
    #[error("empty SMILES")]
    Empty,
    #[error("unexpected character '{0}'")]
    UnexpectedChar(char),
    #[error("unknown element symbol '{0}'")]
    UnknownElement(String),
    #[error("element '{0}' cannot be aromatic (lowercase)")]
    NotAromaticElement(String),
    #[error("'{0}' must be written in brackets, e.g. [{0}]")]
    NeedsBrackets(String),
    #[error("unclosed bracket atom: expected ']'")]
    UnclosedBracket,
    #[error("bad bracket atom: {0}")]
    BadBracket(String),
    #[error("unsupported chirality class '{0}' (only @, @@, @TH1 and @TH2 are read)")]
    UnsupportedChirality(String),
    #[error("ring bond {0} opened here is never closed")]
    UnclosedRing(u32),
    #[error("ring bond {0} closes on the atom that opened it")]
    RingToSelf(u32),
    #[error("ring bond {0} duplicates a bond that already exists")]
    DuplicateBond(u32),
    #[error("ring bond {0} has conflicting bond symbols at its two ends")]
    ConflictingRingBond(u32),
    #[error("'(' opened here is never closed")]
    UnclosedBranch,
    #[error("')' without a matching '('")]
    UnmatchedClose,
    #[error("empty branch '()'")]
    EmptyBranch,
    #[error("branch or bond must follow an atom")]
    NothingToBond,
    #[error("bond symbol '{0}' is not followed by an atom")]
    DanglingBond(char),
    #[error("bad ring-closure number after '%': expected two digits")]
    BadRingNumber,
    #[error("{element} with total valence {valence} (charge {charge}): allowed {allowed}")]
    Valence {
        element: String,
        valence: u32,
        charge: i8,
        allowed: String,
    },
    #[error("conflicting cis/trans marks: two neighbours on the same side of a double bond")]
    ConflictingStereo,
    #[error("aromatic atom '{0}' is not in a ring")]
    AromaticOutsideRing(String),
    #[error(
        "cannot kekulise: no alternation of single and double bonds exists for the aromatic \
         system containing this atom (check [nH] and charges)"
    )]
    Kekulise,
}

/// A SMILES error with the character position (0-based) where it was detected.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
#[error("column {}: {kind}", .position + 1)]
pub struct SmilesError {
    /// 0-based character position in the input string.
    pub position: usize,
    pub kind: SmilesErrorKind,
}

impl SmilesError {
    pub fn new(position: usize, kind: SmilesErrorKind) -> Self {
        SmilesError { position, kind }
    }

    /// 1-based column, as shown to users.
    pub fn column(&self) -> usize {
        self.position + 1
    }
}

/// Errors of the chemistry layer that are not about SMILES syntax.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum ChemError {
    #[error("no standard atomic weight tabulated for element {0}")]
    NoAtomicWeight(String),
    #[error("no mass tabulated for isotope {isotope}{element}")]
    NoIsotopeMass { element: String, isotope: u16 },
}
