//! lumisift: screening donor–acceptor emitter candidates for TADF OLEDs.
//!
//! This release holds the chemistry core every later stage stands on (see `DEVELOPERS.md`).
//!
//! ```
//! use lumisift::chem::{parse_smiles, facts};
//! // A donor–acceptor dyad: carbazole N-linked to benzonitrile.
//! let mol = parse_smiles("N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21").unwrap();
//! let f = facts(&mol).unwrap();
//! assert_eq!(f.formula, "C19H12N2");
//! assert!((f.mol_weight - 268.318).abs() < 0.01);
//! ```

pub mod chem;
pub mod report;
