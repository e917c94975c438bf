//! Job inputs for a user's own quantum-chemistry program, from a plain-text template with
//! placeholders (our own small syntax), so any program can be driven without this tool
//! shipping anyone's input format.
//!
//! # Template syntax
//!
//! Text is copied as is, except `{{name}}` (spaces inside the braces allowed), replaced per
//! candidate by:
//!
//! | placeholder | value |
//! |---|---|
//! | `{{id}}` | candidate id (32 hex digits; name output files after it so `ingest` matches them) |
//! | `{{smiles}}` | canonical SMILES |
//! | `{{formula}}` | Hill formula |
//! | `{{charge}}` | total charge (0: candidates are neutral) |
//! | `{{multiplicity}}` | spin multiplicity of the ground state (1: closed shell) |
//! | `{{natoms}}` | number of atoms, hydrogens included |
//! | `{{coords}}` | one `Symbol x y z` line per atom (Å, 6 decimals), no trailing newline |
//!
//! `{{{{` writes a literal `{{`. An unknown placeholder or an unclosed `{{` is an error naming
//! its line and column.

/// One piece of a parsed template.
#[derive(Debug, Clone, PartialEq)]
enum Part {
    Text(String),
    Field(Field),
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Field {
    Id,
    Smiles,
    Formula,
    Charge,
    Multiplicity,
    Natoms,
    Coords,
}

const FIELDS: [(&str, Field); 7] = [
    ("id", Field::Id),
    ("smiles", Field::Smiles),
    ("formula", Field::Formula),
    ("charge", Field::Charge),
    ("multiplicity", Field::Multiplicity),
    ("natoms", Field::Natoms),
    ("coords", Field::Coords),
];

/// A parsed job template.
#[derive(Debug, Clone, PartialEq)]
pub struct JobTemplate {
    parts: Vec<Part>,
}

/// What a template is filled with for one candidate.
#[derive(Debug, Clone, PartialEq)]
pub struct JobFields {
    pub id: String,
    pub smiles: String,
    pub formula: String,
    pub charge: i32,
    pub multiplicity: u32,
    /// (element symbol, position in Å), hydrogens included.
    pub atoms: Vec<(String, [f64; 3])>,
}

/// `Symbol x y z` lines (Å, 6 decimals), no trailing newline.
fn coords_block(atoms: &[(String, [f64; 3])]) -> String {
    atoms
        .iter()
        .map(|(s, p)| format!("{s:<2} {:>14.6} {:>14.6} {:>14.6}", p[0], p[1], p[2]))
        .collect::<Vec<_>>()
        .join("\n")
}

/// 1-based line and column of byte offset `at` in `text`.
fn line_col(text: &str, at: usize) -> (usize, usize) {
    let before = &text[..at];
    let line = before.matches('\n').count() + 1;
    let col = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    (line, col)
}

impl JobTemplate {
    /// Parse template text; errors name line and column.
    pub fn parse(text: &str) -> Result<JobTemplate, String> {
        let mut parts = Vec::new();
        let mut lit = String::new();
        let mut rest = text;
        let mut offset = 0usize;
        while let Some(k) = rest.find("{{") {
            lit.push_str(&rest[..k]);
            let after = &rest[k + 2..];
            if let Some(stripped) = after.strip_prefix("{{") {
                lit.push_str("{{");
                offset += k + 4;
                rest = stripped;
                continue;
            }
            let Some(end) = after.find("}}") else {
                let (l, c) = line_col(text, offset + k);
                return Err(format!(
                    "line {l}, column {c}: '{{{{' without a closing '}}}}'"
                ));
            };
            let name = after[..end].trim();
            let Some(&(_, f)) = FIELDS.iter().find(|(n, _)| *n == name) else {
                let (l, c) = line_col(text, offset + k);
                let known: Vec<&str> = FIELDS.iter().map(|f| f.0).collect();
                return Err(format!(
                    "line {l}, column {c}: unknown placeholder '{{{{{name}}}}}'; known: {}",
                    known.join(", ")
                ));
            };
            if !lit.is_empty() {
                parts.push(Part::Text(std::mem::take(&mut lit)));
            }
            parts.push(Part::Field(f));
            offset += k + 2 + end + 2;
            rest = &after[end + 2..];
        }
        lit.push_str(rest);
        if !lit.is_empty() {
            parts.push(Part::Text(lit));
        }
        Ok(JobTemplate { parts })
    }

    /// The job input for one candidate.
    pub fn render(&self, j: &JobFields) -> String {
        let mut out = String::new();
        for p in &self.parts {
            match p {
                Part::Text(t) => out.push_str(t),
                Part::Field(f) => match f {
                    Field::Id => out.push_str(&j.id),
                    Field::Smiles => out.push_str(&j.smiles),
                    Field::Formula => out.push_str(&j.formula),
                    Field::Charge => out.push_str(&j.charge.to_string()),
                    Field::Multiplicity => out.push_str(&j.multiplicity.to_string()),
                    Field::Natoms => out.push_str(&j.atoms.len().to_string()),
                    Field::Coords => out.push_str(&coords_block(&j.atoms)),
                },
            }
        }
        out
    }
}

/// The fields of one candidate: its equilibrium-twist geometry from the π tier's torsion model
/// (default estimate settings), hydrogens placed by the geometry stage. A start geometry for
/// the user's own optimisation or single point, not an optimised structure.
pub fn fields_for(id: &str, smiles: &str) -> Result<JobFields, String> {
    use crate::geometry::{Coordinates, with_hydrogens};
    let mol = crate::chem::parse_smiles(smiles).map_err(|e| format!("{id}: SMILES: {e}"))?;
    let est = crate::pi::estimate::estimate(
        &mol,
        &crate::pi::params::PppParams::default_set(),
        &Default::default(),
    )
    .map_err(|e| format!("{id}: {e}"))?;
    let (mh, ch) = with_hydrogens(
        &mol,
        &Coordinates {
            points: est.geometry.clone(),
        },
    );
    let atoms = mh
        .atoms()
        .map(|a| (mh.atom(a).symbol().to_string(), ch.points[a.index()]))
        .collect();
    Ok(JobFields {
        id: id.to_string(),
        smiles: crate::chem::canonical_smiles(&mol),
        formula: crate::chem::props::formula(&mol),
        charge: 0,
        multiplicity: 1,
        atoms,
    })
}

/// What `write_jobs` wrote.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct JobsWritten {
    pub written: Vec<String>,
    /// (requested id or SMILES, reason).
    pub failed: Vec<(String, String)>,
}

/// For each requested candidate (id or SMILES; looked up in the store), write
/// `DIR/<id>.xyz` and `DIR/<id>.<ext>` (the template filled in), and `DIR/manifest.csv`
/// (id, canonical SMILES, files). A candidate that cannot be found or estimated is reported
/// and skipped; the others are written.
pub fn write_jobs(
    conn: &rusqlite::Connection,
    requested: &[String],
    template: &JobTemplate,
    dir: &std::path::Path,
    ext: &str,
) -> Result<JobsWritten, String> {
    std::fs::create_dir_all(dir).map_err(|e| format!("{}: {e}", dir.display()))?;
    let all = super::store_candidates(conn)?;
    let smiles_of: std::collections::HashMap<String, String> = all.iter().cloned().collect();
    let index = crate::qc::matching::CandidateIndex::new(all);
    let mut out = JobsWritten::default();
    let mut manifest = String::from("candidate_id,canonical_smiles,xyz,input\n");
    for req in requested {
        let id = match index.match_identifier(req) {
            crate::qc::matching::MatchOutcome::Matched { candidate_id, .. } => candidate_id,
            other => {
                let why = match other {
                    crate::qc::matching::MatchOutcome::Unmatched { reason } => reason,
                    o => o.status().to_string(),
                };
                out.failed.push((req.clone(), why));
                continue;
            }
        };
        if out.written.contains(&id) {
            continue;
        }
        let fields = match fields_for(&id, &smiles_of[&id]) {
            Ok(f) => f,
            Err(e) => {
                out.failed.push((req.clone(), e));
                continue;
            }
        };
        let xyz_name = format!("{id}.xyz");
        let inp_name = format!("{id}.{ext}");
        let xyz = format!(
            "{}\n{id} {} lumisift start geometry (equilibrium twist, not optimised)\n{}\n",
            fields.atoms.len(),
            fields.smiles,
            coords_block(&fields.atoms)
        );
        for (name, text) in [(&xyz_name, xyz), (&inp_name, template.render(&fields))] {
            let p = dir.join(name);
            std::fs::write(&p, text).map_err(|e| format!("{}: {e}", p.display()))?;
        }
        manifest.push_str(&format!("{id},{},{xyz_name},{inp_name}\n", fields.smiles));
        out.written.push(id);
    }
    let p = dir.join("manifest.csv");
    std::fs::write(&p, manifest).map_err(|e| format!("{}: {e}", p.display()))?;
    Ok(out)
}
