//! The chemistry core: the molecule graph, elements and atomic weights, SMILES reading and
//! canonical writing, aromaticity, ring perception, formula and masses, fingerprints.
//!
//! Invariants: pure functions on in-memory values; no files, threads or terminal here.

pub mod aromaticity;
pub mod canon;
pub mod element;
pub mod error;
pub mod fingerprint;
pub(crate) mod kekulize;
pub mod mol;
pub mod props;
pub mod rings;
pub mod smiles;

pub use error::{ChemError, SmilesError, SmilesErrorKind};
pub use fingerprint::{Fingerprint, FingerprintParams, circular_fingerprint, tanimoto};
pub use mol::{Atom, AtomIdx, Bond, BondIdx, BondOrder, Molecule};
pub use props::{MolFacts, candidate_id, facts};
pub use smiles::parse::parse_smiles;
pub use smiles::write::{CANONICALISER_VERSION, canonical_smiles};
