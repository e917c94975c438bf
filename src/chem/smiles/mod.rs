//! SMILES reading and canonical writing.

pub mod parse;
pub mod write;
