//! Matching imported results to candidates, three ways, in this order of trust:
//!
//! 1. **Candidate id in the file's path**: a 32-hex-digit token (the id `export --for-qc`
//!    puts in every job name) that is a candidate of the store.
//! 2. **SMILES** (neutral results table): canonicalised by our canonicaliser and looked up.
//! 3. **Geometry**: the heavy-atom skeleton perceived from the final geometry
//!    ([`crate::geometry::perceive`]) against the skeleton keys of all candidates; one
//!    candidate with that key is a match, several are ambiguous (same skeleton, different
//!    bond orders), none is unmatched.
//!
//! When a file has both an id in its path and a geometry, the two must agree: a geometry of a
//! different molecule under a candidate's name is reported as a conflict and not stored
//! against either (a mislabelled job is more common than it should be).

use std::collections::HashMap;

use serde::Serialize;

use crate::geometry::Point;
use crate::geometry::perceive::{skeleton_from_coordinates, skeleton_key, skeleton_of};

/// How a result was tied to its candidate.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum MatchBy {
    FileName,
    Smiles,
    Geometry,
}

impl MatchBy {
    pub fn as_str(self) -> &'static str {
        match self {
            MatchBy::FileName => "file_name",
            MatchBy::Smiles => "smiles",
            MatchBy::Geometry => "geometry",
        }
    }
}

/// The outcome of matching one file or table row.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "status", rename_all = "snake_case")]
pub enum MatchOutcome {
    Matched {
        candidate_id: String,
        by: MatchBy,
    },
    Ambiguous {
        candidates: Vec<String>,
        by: MatchBy,
    },
    Conflict {
        by_name: String,
        by_geometry: Vec<String>,
    },
    Unmatched {
        reason: String,
    },
}

impl MatchOutcome {
    pub fn candidate(&self) -> Option<&str> {
        match self {
            MatchOutcome::Matched { candidate_id, .. } => Some(candidate_id),
            _ => None,
        }
    }

    /// `matched`, `ambiguous`, `conflict` or `unmatched`.
    pub fn status(&self) -> &'static str {
        match self {
            MatchOutcome::Matched { .. } => "matched",
            MatchOutcome::Ambiguous { .. } => "ambiguous",
            MatchOutcome::Conflict { .. } => "conflict",
            MatchOutcome::Unmatched { .. } => "unmatched",
        }
    }
}

/// The store's candidates, indexed for matching. Skeleton keys are computed when first needed
/// (a SMILES parse per candidate), since files named by id never need them.
pub struct CandidateIndex {
    smiles_of: HashMap<String, String>,
    by_smiles: HashMap<String, String>,
    by_skeleton: Option<HashMap<String, Vec<String>>>,
}

impl CandidateIndex {
    /// From `(candidate_id, canonical_smiles)` pairs.
    pub fn new(candidates: impl IntoIterator<Item = (String, String)>) -> Self {
        let mut smiles_of = HashMap::new();
        let mut by_smiles = HashMap::new();
        for (id, smi) in candidates {
            by_smiles.insert(smi.clone(), id.clone());
            smiles_of.insert(id, smi);
        }
        CandidateIndex {
            smiles_of,
            by_smiles,
            by_skeleton: None,
        }
    }

    pub fn len(&self) -> usize {
        self.smiles_of.len()
    }

    pub fn is_empty(&self) -> bool {
        self.smiles_of.is_empty()
    }

    pub fn contains(&self, id: &str) -> bool {
        self.smiles_of.contains_key(id)
    }

    fn skeletons(&mut self) -> &HashMap<String, Vec<String>> {
        self.by_skeleton.get_or_insert_with(|| {
            let mut m: HashMap<String, Vec<String>> = HashMap::new();
            let mut ids: Vec<(&String, &String)> = self.smiles_of.iter().collect();
            ids.sort();
            for (id, smi) in ids {
                if let Ok(mol) = crate::chem::parse_smiles(smi) {
                    m.entry(skeleton_key(&skeleton_of(&mol)))
                        .or_default()
                        .push(id.clone());
                }
            }
            m
        })
    }

    /// Candidate ids of the store that appear as 32-hex-digit tokens in `path`.
    pub fn ids_in_path(&self, path: &str) -> Vec<String> {
        let mut found: Vec<String> = Vec::new();
        for token in path.split(|c: char| !c.is_ascii_hexdigit()) {
            let t = token.to_ascii_lowercase();
            if t.len() == 32 && self.contains(&t) && !found.contains(&t) {
                found.push(t);
            }
        }
        found
    }

    /// Match by a candidate id or a SMILES (neutral table's `candidate` column).
    pub fn match_identifier(&self, text: &str) -> MatchOutcome {
        let t = text.trim();
        if t.len() == 32 && t.chars().all(|c| c.is_ascii_hexdigit()) {
            let t = t.to_ascii_lowercase();
            return if self.contains(&t) {
                MatchOutcome::Matched {
                    candidate_id: t,
                    by: MatchBy::FileName,
                }
            } else {
                MatchOutcome::Unmatched {
                    reason: format!("candidate id {t} is not in the store"),
                }
            };
        }
        match crate::chem::parse_smiles(t) {
            Ok(mol) => {
                let canonical = crate::chem::canonical_smiles(&mol);
                match self.by_smiles.get(&canonical) {
                    Some(id) => MatchOutcome::Matched {
                        candidate_id: id.clone(),
                        by: MatchBy::Smiles,
                    },
                    None => MatchOutcome::Unmatched {
                        reason: format!("no candidate with canonical SMILES {canonical}"),
                    },
                }
            }
            Err(e) => MatchOutcome::Unmatched {
                reason: format!("'{t}' is neither a candidate id nor a valid SMILES: {e}"),
            },
        }
    }

    /// Match an output file by the id in its path and, where it has one, its final geometry
    /// (atomic numbers and Å).
    pub fn match_file(&mut self, path: &str, geometry: Option<&[(u8, Point)]>) -> MatchOutcome {
        let named = self.ids_in_path(path);
        if named.len() > 1 {
            return MatchOutcome::Ambiguous {
                candidates: named,
                by: MatchBy::FileName,
            };
        }
        let by_geom: Option<Result<Vec<String>, String>> = geometry.map(|g| {
            let key = skeleton_key(&skeleton_from_coordinates(g)?);
            Ok(self.skeletons().get(&key).cloned().unwrap_or_default())
        });
        match (named.first(), by_geom) {
            (Some(id), Some(Ok(hits))) if !hits.is_empty() && !hits.contains(id) => {
                MatchOutcome::Conflict {
                    by_name: id.clone(),
                    by_geometry: hits,
                }
            }
            (Some(id), Some(Ok(hits))) if hits.is_empty() => MatchOutcome::Conflict {
                by_name: id.clone(),
                by_geometry: Vec::new(),
            },
            (Some(id), _) => MatchOutcome::Matched {
                candidate_id: id.clone(),
                by: MatchBy::FileName,
            },
            (None, Some(Ok(hits))) => match hits.len() {
                0 => MatchOutcome::Unmatched {
                    reason: "no id in the file name and no candidate with this geometry's \
                             heavy-atom skeleton"
                        .into(),
                },
                1 => MatchOutcome::Matched {
                    candidate_id: hits[0].clone(),
                    by: MatchBy::Geometry,
                },
                _ => MatchOutcome::Ambiguous {
                    candidates: hits,
                    by: MatchBy::Geometry,
                },
            },
            (None, Some(Err(e))) => MatchOutcome::Unmatched {
                reason: format!("no id in the file name; geometry not usable: {e}"),
            },
            (None, None) => MatchOutcome::Unmatched {
                reason: "no id in the file name and no geometry in the file".into(),
            },
        }
    }
}
