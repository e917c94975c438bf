//! Shared types every stage passes around: the assembled candidate (its graph, which unit each
//! atom belongs to, the inter-unit bonds that can twist, its provenance) and the versioned
//! descriptor record. Geometry and the π engine depend on these types, never on the fragment
//! loader.

use serde::{Deserialize, Serialize};

use crate::chem::{BondIdx, Molecule};

/// The part a fragment plays in a donor–acceptor molecule.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Role {
    Donor,
    Acceptor,
    Bridge,
    EndCap,
}

impl Role {
    pub fn as_str(self) -> &'static str {
        match self {
            Role::Donor => "donor",
            Role::Acceptor => "acceptor",
            Role::Bridge => "bridge",
            Role::EndCap => "end-cap",
        }
    }
}

impl std::fmt::Display for Role {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// How fragments are put together.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub enum Architecture {
    /// Donor on a one-site acceptor.
    #[serde(rename = "D-A")]
    DA,
    /// Donor, bridge, one-site acceptor.
    #[serde(rename = "D-B-A")]
    DBA,
    /// Two donors on a two-site acceptor.
    #[serde(rename = "D-A-D")]
    DAD,
    /// Two acceptors on a two-site donor core.
    #[serde(rename = "A-D-A")]
    ADA,
    /// Donor–bridge arms on both sites of a two-site acceptor (same donor and bridge on both).
    #[serde(rename = "D-B-A-B-D")]
    DBABD,
    /// 2–5 donors on an acceptor core with several sites; free sites carry hydrogen.
    #[serde(rename = "Dn-A")]
    DnA,
}

impl Architecture {
    pub const ALL: [Architecture; 6] = [
        Architecture::DA,
        Architecture::DBA,
        Architecture::DAD,
        Architecture::ADA,
        Architecture::DBABD,
        Architecture::DnA,
    ];

    pub fn as_str(self) -> &'static str {
        match self {
            Architecture::DA => "D-A",
            Architecture::DBA => "D-B-A",
            Architecture::DAD => "D-A-D",
            Architecture::ADA => "A-D-A",
            Architecture::DBABD => "D-B-A-B-D",
            Architecture::DnA => "Dn-A",
        }
    }

    pub fn parse(s: &str) -> Option<Architecture> {
        Architecture::ALL.into_iter().find(|a| a.as_str() == s)
    }
}

impl std::fmt::Display for Architecture {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// One unit (fragment instance) of an assembled candidate.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Unit {
    pub fragment_id: String,
    pub role: Role,
}

/// A bond made by joining two units.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Link {
    pub bond: BondIdx,
    /// Indices into [`Candidate::units`].
    pub units: (usize, usize),
    /// A single bond not on a ring: the units can rotate about it.
    pub twistable: bool,
}

/// Where a candidate came from: the tuple that built it. Several tuples can build the same
/// molecule; each is kept.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub struct Provenance {
    pub architecture: Architecture,
    /// The tuple key: architecture, core, and per site its arm (see `combine::Tuple::key`).
    pub tuple_key: String,
    /// Fragment ids in slot order (core first, then arms by site).
    pub fragments: Vec<String>,
    /// Symmetry-reduced site assignment, e.g. `1:carbazol-9-yl 2:H`.
    pub sites: String,
}

/// An assembled candidate molecule with its partition into units.
#[derive(Debug, Clone)]
pub struct Candidate {
    pub mol: Molecule,
    /// `atom_unit[a]` is the index into `units` of the unit atom `a` came from.
    pub atom_unit: Vec<usize>,
    pub units: Vec<Unit>,
    pub links: Vec<Link>,
    pub provenance: Provenance,
}

/// Version of [`DescriptorRecord`]'s layout; bump when fields change meaning.
pub const DESCRIPTOR_VERSION: u32 = 1;

/// Per-candidate facts a stage stores, versioned so a store can tell old records from new.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DescriptorRecord {
    pub version: u32,
    pub candidate_id: String,
    pub canonical_smiles: String,
    pub formula: String,
    pub mol_weight: f64,
    pub heavy_atoms: usize,
    pub units: usize,
    pub twistable_links: usize,
}
