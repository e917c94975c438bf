//! lumisift: screening donor–acceptor emitter candidates for TADF OLEDs.
//!
//! Layers (dependencies point downward): `chem` (molecule graph, SMILES, canonical form) ←
//! `model` (shared candidate types) ← `fragments` (library files) ← `combine` (enumeration) ←
//! `campaign` (workflow, SQLite store, runner). `report` writes tables. See `DEVELOPERS.md`.
//!
//! ```
//! use lumisift::chem::{parse_smiles, facts};
//! // A donor–acceptor dyad: carbazole N-linked to benzonitrile.
//! let mol = parse_smiles("N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21").unwrap();
//! let f = facts(&mol).unwrap();
//! assert_eq!(f.formula, "C19H12N2");
//! assert!((f.mol_weight - 268.318).abs() < 0.01);
//! ```

pub mod calibrate;
pub mod campaign;
pub mod chem;
pub mod colour;
pub mod combine;
pub mod fast;
pub mod forster;
pub mod fragments;
pub mod geometry;
pub mod model;
pub mod photophysics;
pub mod pi;
pub mod qc;
pub mod rank;
pub mod report;
pub mod synth;
