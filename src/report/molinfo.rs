//! `molinfo`: streaming facts for a file of SMILES, one CSV row per good line, one diagnostic per
//! bad line. Lines are read in chunks, each chunk processed in parallel (rayon) and written in
//! input order, so memory stays flat however long the input is and the output is deterministic.

use std::io::{BufRead, Write};

use rayon::prelude::*;
use serde::Serialize;

use crate::chem::{facts, parse_smiles};

/// One CSV row.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct MolInfoRow {
    pub id: String,
    pub input: String,
    pub canonical_smiles: String,
    pub formula: String,
    pub mol_weight: String,
    pub monoisotopic_mass: String,
    pub heavy_atoms: usize,
    pub rings: usize,
    pub aromatic_atoms: usize,
}

/// A line that could not be processed.
#[derive(Debug, Clone, PartialEq)]
pub struct LineError {
    /// 1-based line number.
    pub line: usize,
    /// 1-based column in the line, where known.
    pub column: Option<usize>,
    pub message: String,
}

/// Totals of a run.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Summary {
    pub ok: usize,
    pub failed: usize,
    pub skipped: usize,
}

/// Outcome of one input line.
enum LineOutcome {
    Row(MolInfoRow),
    Skip,
    Error(LineError),
}

/// Process one line: `SMILES [id [comment…]]`; blank lines and `#` comments skipped.
fn process_line(line_no: usize, line: &str) -> LineOutcome {
    let trimmed_start = line.len() - line.trim_start().len();
    let body = line.trim();
    if body.is_empty() || body.starts_with('#') {
        return LineOutcome::Skip;
    }
    let mut parts = body.splitn(2, char::is_whitespace);
    let smiles = parts.next().unwrap_or("");
    // The id is the second whitespace-separated field; anything after it is a free comment.
    let id = parts
        .next()
        .and_then(|rest| rest.split_whitespace().next())
        .map(str::to_string)
        .unwrap_or_else(|| line_no.to_string());
    let mol = match parse_smiles(smiles) {
        Ok(m) => m,
        Err(e) => {
            let col = line[..trimmed_start].chars().count() + e.column();
            return LineOutcome::Error(LineError {
                line: line_no,
                column: Some(col),
                message: format!("invalid SMILES '{smiles}': {}", e.kind),
            });
        }
    };
    match facts(&mol) {
        Ok(f) => LineOutcome::Row(MolInfoRow {
            id,
            input: smiles.to_string(),
            canonical_smiles: f.canonical_smiles,
            formula: f.formula,
            mol_weight: format!("{:.4}", f.mol_weight),
            monoisotopic_mass: format!("{:.6}", f.monoisotopic_mass),
            heavy_atoms: f.heavy_atoms,
            rings: f.rings,
            aromatic_atoms: f.aromatic_atoms,
        }),
        Err(e) => LineOutcome::Error(LineError {
            line: line_no,
            column: None,
            message: format!("'{smiles}': {e}"),
        }),
    }
}

/// Lines per parallel chunk.
const CHUNK: usize = 8192;

/// Read `input` line by line, write CSV rows to `out`, and report each bad line to `on_error`.
///
/// # Errors
/// Only I/O errors of reading or writing end the run early; bad lines never do.
pub fn run<R: BufRead, W: Write>(
    input: R,
    out: W,
    mut on_error: impl FnMut(&LineError),
) -> std::io::Result<Summary> {
    let mut wtr = csv::WriterBuilder::new()
        .has_headers(false)
        .from_writer(out);
    wtr.write_record([
        "id",
        "input",
        "canonical_smiles",
        "formula",
        "mol_weight",
        "monoisotopic_mass",
        "heavy_atoms",
        "rings",
        "aromatic_atoms",
    ])?;
    let mut summary = Summary::default();
    let mut chunk: Vec<(usize, String)> = Vec::with_capacity(CHUNK);
    let mut line_no = 0usize;
    let mut lines = input.lines();
    loop {
        chunk.clear();
        for line in lines.by_ref() {
            line_no += 1;
            match line {
                Ok(l) => chunk.push((line_no, l)),
                Err(e) if e.kind() == std::io::ErrorKind::InvalidData => {
                    on_error(&LineError {
                        line: line_no,
                        column: None,
                        message: "line is not valid UTF-8".into(),
                    });
                    summary.failed += 1;
                }
                Err(e) => return Err(e),
            }
            if chunk.len() == CHUNK {
                break;
            }
        }
        if chunk.is_empty() {
            break;
        }
        let results: Vec<LineOutcome> =
            chunk.par_iter().map(|(n, l)| process_line(*n, l)).collect();
        for r in results {
            match r {
                LineOutcome::Row(row) => {
                    wtr.serialize(&row).map_err(std::io::Error::other)?;
                    summary.ok += 1;
                }
                LineOutcome::Skip => summary.skipped += 1,
                LineOutcome::Error(e) => {
                    on_error(&e);
                    summary.failed += 1;
                }
            }
        }
        if chunk.len() < CHUNK {
            break;
        }
    }
    wtr.flush()?;
    Ok(summary)
}
