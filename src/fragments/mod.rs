//! The fragment library: TOML files with one entry per donor, acceptor, bridge or end-cap,
//! loaded, validated and prepared for the combiner (attachment sites and their symmetry).
//!
//! # File schema (our own)
//!
//! ```toml
//! [[fragment]]
//! id = "carbazol-9-yl"                  # unique; [a-z0-9] and '-' ',' '(' ')' '[' ']'
//! name = "9H-carbazol-9-yl"             # systematic name where one exists
//! role = "donor"                        # donor | acceptor | bridge | end-cap
//! smiles = "[*:1]n1c2ccccc2c2ccccc21"   # attachment points [*:1], [*:2], ... (1..k, no gaps)
//! handle = "n-h"                        # n-h | aryl-halide | aryl-fluoride | boronic-ester | boron-halide | none
//! on_shelf = true                       # optional, default false
//! note = "free text"                    # optional
//! ```
//!
//! Unknown keys are errors. Site counts by role: donor 1–2 (two-site donor cores serve A–D–A),
//! acceptor 1–6, bridge 2, end-cap 1. Each attachment dummy has exactly one neighbour, joined by a
//! single bond (the dummy stands for the hydrogen the coupling replaces, so valences stay valid).

mod load;

pub use load::{FragmentError, load_library, load_paths, site_anchors};

use std::path::PathBuf;

use serde::{Deserialize, Serialize};

use crate::chem::{AtomIdx, Molecule};
use crate::model::Role;

/// The coupling handle a chemist would put on this fragment to make its inter-fragment bond.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Handle {
    /// An N–H amine or azole (C–N coupling partner).
    NH,
    /// An aryl bromide or iodide.
    ArylHalide,
    /// An aryl fluoride activated for nucleophilic aromatic substitution.
    ArylFluoride,
    /// An aryl boronic acid or pinacol ester.
    BoronicEster,
    /// A boron halide or other borane electrophile (aryl-lithium routes).
    BoronHalide,
    None,
}

impl Handle {
    pub fn as_str(self) -> &'static str {
        match self {
            Handle::NH => "n-h",
            Handle::ArylHalide => "aryl-halide",
            Handle::ArylFluoride => "aryl-fluoride",
            Handle::BoronicEster => "boronic-ester",
            Handle::BoronHalide => "boron-halide",
            Handle::None => "none",
        }
    }
}

/// An attachment point: the dummy atom and the atom it is bonded to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Site {
    /// Atom class of the dummy (`[*:n]` has class n); sites are stored in class order.
    pub class: u32,
    pub dummy: AtomIdx,
    pub anchor: AtomIdx,
}

/// Where an entry was read from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SourceRef {
    pub file: PathBuf,
    pub line: usize,
}

/// A validated fragment.
#[derive(Debug, Clone)]
pub struct Fragment {
    pub id: String,
    pub name: String,
    pub role: Role,
    pub smiles: String,
    pub handle: Handle,
    pub on_shelf: bool,
    pub note: Option<String>,
    pub mol: Molecule,
    /// Sites in class order (index 0 is `[*:1]`).
    pub sites: Vec<Site>,
    /// Permutations of site indices that map the fragment onto itself (always contains the
    /// identity). `perm[i] = j` means site i can be relabelled as site j.
    pub site_symmetry: Vec<Vec<u8>>,
    /// Canonical SMILES with attachment points (classes kept).
    pub canonical_smiles: String,
    /// Average molecular weight without the dummy atoms (g/mol).
    pub mass_without_sites: f64,
    /// Heavy atoms without the dummy atoms.
    pub heavy_atoms: usize,
    pub source: SourceRef,
}

impl Fragment {
    pub fn site_count(&self) -> usize {
        self.sites.len()
    }

    /// Does swapping the two sites of a two-site fragment give the same fragment?
    pub fn sites_swappable(&self) -> bool {
        self.sites.len() == 2 && self.site_symmetry.iter().any(|p| p[0] == 1)
    }
}

/// All fragments, sorted by id.
#[derive(Debug, Clone, Default)]
pub struct Library {
    pub fragments: Vec<Fragment>,
}

impl Library {
    pub fn get(&self, id: &str) -> Option<&Fragment> {
        self.fragments
            .binary_search_by(|f| f.id.as_str().cmp(id))
            .ok()
            .map(|i| &self.fragments[i])
    }

    pub fn index_of(&self, id: &str) -> Option<usize> {
        self.fragments
            .binary_search_by(|f| f.id.as_str().cmp(id))
            .ok()
    }

    /// Fragments of one role with a given number of sites, in id order.
    pub fn with(&self, role: Role, sites: usize) -> Vec<usize> {
        (0..self.fragments.len())
            .filter(|&i| {
                let f = &self.fragments[i];
                f.role == role && f.site_count() == sites
            })
            .collect()
    }

    /// A hash of the library's content (ids and canonical structures), for parameter-set keys.
    pub fn content_hash(&self) -> String {
        let mut h = blake3::Hasher::new();
        for f in &self.fragments {
            h.update(f.id.as_bytes());
            h.update(b"\t");
            h.update(f.canonical_smiles.as_bytes());
            h.update(b"\t");
            h.update(f.role.as_str().as_bytes());
            h.update(b"\n");
        }
        h.finalize().to_hex()[..16].to_string()
    }
}
