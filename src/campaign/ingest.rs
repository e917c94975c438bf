//! `ingest`: quantum-chemistry output files and neutral results tables into the campaign
//! store, each state matched to its candidate ([`crate::qc::matching`]).
//!
//! - Paths may be files or folders (walked recursively, in sorted order so runs are
//!   deterministic). `*.csv` files are read as the neutral results table, everything else by
//!   the program readers (autodetected from content). Inside a folder, files that are neither
//!   (job inputs, XYZ files, scheduler logs) are listed as skipped, not failed; a file named
//!   explicitly that cannot be read is a failure.
//! - Re-importing the same bytes is idempotent (the content's BLAKE3 hash is unique in
//!   `qc_sources`); a source with unmatched, ambiguous or conflicting items is matched again
//!   (the store may have gained candidates since), its states replaced in one transaction.
//! - Program outputs are stored as the `kind` the caller names (default: vertical absorption,
//!   the usual TD-DFT single point at the ground-state geometry); table rows carry their own.
//! - Each calculation of a file is matched on its own geometry (falling back to the file's
//!   last geometry) and the candidate id in the path.

use std::path::{Path, PathBuf};

use rusqlite::{OptionalExtension, params};
use serde::Serialize;

use super::error::CampaignError;
use super::store::Store;
use crate::qc::matching::{CandidateIndex, MatchOutcome};
use crate::qc::table::{ResultKind, read_table_str};
use crate::qc::{Diagnostic, Geometry, QcError, read_str};

/// Settings of one ingest.
#[derive(Debug, Clone)]
pub struct IngestOptions {
    /// What the energies of program outputs are.
    pub kind: ResultKind,
    /// Free text stored as the conditions of program outputs (e.g. `gas phase`).
    pub conditions: Option<String>,
}

impl Default for IngestOptions {
    fn default() -> Self {
        IngestOptions {
            kind: ResultKind::VerticalAbsorption,
            conditions: None,
        }
    }
}

/// What happened to one file.
#[derive(Debug, Clone, Serialize)]
pub struct FileReport {
    pub path: String,
    /// Program name, `table`, or empty when unreadable.
    pub format: String,
    /// `stored`, `already` (same bytes imported before, all matched), `rematched`, `skipped`
    /// (not a results file, found in a folder) or `failed`.
    pub status: String,
    pub partial: bool,
    /// States (or table rows) stored.
    pub states: usize,
    /// Match of each calculation (files) or row (tables).
    pub matches: Vec<MatchOutcome>,
    pub message: Option<String>,
    pub diagnostics: Vec<Diagnostic>,
}

/// Totals over an ingest.
#[derive(Debug, Clone, Default, Serialize)]
pub struct IngestSummary {
    pub files: Vec<FileReport>,
    pub states_stored: usize,
    pub matched: usize,
    pub ambiguous: usize,
    pub conflict: usize,
    pub unmatched: usize,
    pub failed: usize,
    pub skipped: usize,
}

/// Every file under `paths` (folders walked recursively, entries sorted), each with whether it
/// was named explicitly.
pub fn collect_files(paths: &[PathBuf]) -> Result<Vec<(PathBuf, bool)>, CampaignError> {
    fn walk(dir: &Path, out: &mut Vec<(PathBuf, bool)>) -> Result<(), CampaignError> {
        let mut entries: Vec<PathBuf> = std::fs::read_dir(dir)
            .map_err(|e| CampaignError::Other(format!("{}: {e}", dir.display())))?
            .filter_map(|e| e.ok().map(|e| e.path()))
            .collect();
        entries.sort();
        for p in entries {
            if p.is_dir() {
                walk(&p, out)?;
            } else {
                out.push((p, false));
            }
        }
        Ok(())
    }
    let mut out = Vec::new();
    for p in paths {
        if p.is_dir() {
            walk(p, &mut out)?;
        } else if p.exists() {
            out.push((p.clone(), true));
        } else {
            return Err(CampaignError::Other(format!(
                "{}: no such file or folder",
                p.display()
            )));
        }
    }
    Ok(out)
}

/// One state or row ready for the store.
struct Item {
    item: usize,
    state: usize,
    outcome: MatchOutcome,
    kind: String,
    method: Option<String>,
    conditions: Option<String>,
    multiplicity: Option<u8>,
    label: Option<String>,
    energy_ev: f64,
    osc_strength: Option<f64>,
}

fn geometry_atoms(g: &Geometry) -> Vec<(u8, [f64; 3])> {
    g.atomic_numbers
        .iter()
        .copied()
        .zip(g.coords_angstrom.iter().copied())
        .collect()
}

fn is_table(path: &Path) -> bool {
    path.extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("csv"))
}

/// What a file yields: its format, partial flag, items and diagnostics; or why it was not read
/// (`Err((skippable, message))`: skippable when the file is simply not a results file).
#[allow(clippy::type_complexity)]
fn read_items(
    path: &Path,
    text: &str,
    index: &mut CandidateIndex,
    opts: &IngestOptions,
) -> Result<
    (
        String,
        Option<String>,
        Option<String>,
        bool,
        Vec<Item>,
        Vec<Diagnostic>,
    ),
    (bool, String),
> {
    let name = path.display().to_string();
    if is_table(path) {
        let (rows, diags) = read_table_str(text, &name).map_err(|e| (false, e.to_string()))?;
        let items = rows
            .into_iter()
            .map(|r| Item {
                item: r.line,
                state: 0,
                outcome: index.match_identifier(&r.candidate),
                kind: r.kind.name().to_string(),
                method: r.method,
                conditions: r.conditions,
                multiplicity: r.multiplicity,
                label: r.state_label,
                energy_ev: r.energy_ev,
                osc_strength: r.osc_strength,
            })
            .collect();
        return Ok(("table".into(), None, None, false, items, diags));
    }
    let (res, diags) = match read_str(text, &name) {
        Ok(x) => x,
        Err(e @ QcError::UnknownFormat { .. }) => return Err((true, e.to_string())),
        Err(e) => return Err((false, e.to_string())),
    };
    let last_geometry = res
        .calculations
        .iter()
        .rev()
        .find_map(|c| c.geometry.as_ref());
    let mut items = Vec::new();
    for (ci, calc) in res.calculations.iter().enumerate() {
        if calc.states.is_empty() {
            continue;
        }
        let geom = calc.geometry.as_ref().or(last_geometry).map(geometry_atoms);
        let outcome = index.match_file(&name, geom.as_deref());
        let method = calc.method.clone().or_else(|| res.method.clone());
        for s in &calc.states {
            items.push(Item {
                item: ci,
                state: s.index,
                outcome: outcome.clone(),
                kind: opts.kind.name().to_string(),
                method: method.clone(),
                conditions: opts.conditions.clone(),
                multiplicity: s.multiplicity,
                label: Some(s.label.clone()),
                energy_ev: s.energy_ev,
                osc_strength: s.osc_strength,
            });
        }
    }
    Ok((
        res.program.to_string(),
        res.version.clone(),
        res.method.clone(),
        res.partial,
        items,
        diags,
    ))
}

/// Import `paths` into the store. Per-file problems are reported in the summary and the run
/// carries on; only store errors abort.
pub fn ingest(
    store: &mut Store,
    paths: &[PathBuf],
    opts: &IngestOptions,
) -> Result<IngestSummary, CampaignError> {
    let files = collect_files(paths)?;
    let candidates = crate::report::store_candidates(store.connection())
        .map_err(|e| CampaignError::Other(format!("{}: {e}", store.path.display())))?;
    let mut index = CandidateIndex::new(candidates);
    let mut sum = IngestSummary::default();
    let spath = store.path.clone();
    let sq = CampaignError::sqlite(&spath);
    for (path, explicit) in files {
        let mut rep = FileReport {
            path: path.display().to_string(),
            format: String::new(),
            status: String::new(),
            partial: false,
            states: 0,
            matches: Vec::new(),
            message: None,
            diagnostics: Vec::new(),
        };
        let bytes = match std::fs::read(&path) {
            Ok(b) => b,
            Err(e) => {
                rep.status = "failed".into();
                rep.message = Some(e.to_string());
                sum.failed += 1;
                sum.files.push(rep);
                continue;
            }
        };
        let hash = blake3::hash(&bytes).to_hex().to_string();
        let conn = store.connection_mut();
        let existing: Option<(i64, i64)> = conn
            .query_row(
                "SELECT s.source_id, (SELECT count(*) FROM qc_states q
                   WHERE q.source_id = s.source_id AND q.match_status != 'matched')
                 FROM qc_sources s WHERE s.content_hash = ?1",
                [&hash],
                |r| Ok((r.get(0)?, r.get(1)?)),
            )
            .optional()
            .map_err(&sq)?;
        if let Some((_, 0)) = existing {
            rep.status = "already".into();
            sum.files.push(rep);
            continue;
        }
        let text = String::from_utf8_lossy(&bytes);
        let (format, version, method, partial, items, diags) =
            match read_items(&path, &text, &mut index, opts) {
                Ok(x) => x,
                Err((skippable, msg)) => {
                    if skippable && !explicit {
                        rep.status = "skipped".into();
                        sum.skipped += 1;
                    } else {
                        rep.status = "failed".into();
                        sum.failed += 1;
                    }
                    rep.message = Some(msg);
                    sum.files.push(rep);
                    continue;
                }
            };
        rep.format = format.clone();
        rep.partial = partial;
        rep.diagnostics = diags;
        let tx = store
            .connection_mut()
            .transaction()
            .map_err(CampaignError::sqlite(&spath))?;
        let source_id = match existing {
            Some((id, _)) => {
                tx.execute("DELETE FROM qc_states WHERE source_id = ?1", [id])
                    .map_err(CampaignError::sqlite(&spath))?;
                rep.status = "rematched".into();
                id
            }
            None => {
                tx.execute(
                    "INSERT INTO qc_sources(content_hash, path, format, version, method, partial,
                       imported_utc, diagnostics_json) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8)",
                    params![
                        hash,
                        rep.path,
                        format,
                        version,
                        method,
                        partial as i64,
                        super::store::now_utc(),
                        serde_json::to_string(&rep.diagnostics).expect("serialisable"),
                    ],
                )
                .map_err(CampaignError::sqlite(&spath))?;
                rep.status = "stored".into();
                tx.last_insert_rowid()
            }
        };
        let mut last_item = None;
        for it in &items {
            tx.execute(
                "INSERT OR REPLACE INTO qc_states(source_id, item, state, candidate_id,
                   match_status, match_json, kind, method, conditions, multiplicity, label,
                   energy_ev, osc_strength)
                 VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13)",
                params![
                    source_id,
                    it.item as i64,
                    it.state as i64,
                    it.outcome.candidate(),
                    it.outcome.status(),
                    serde_json::to_string(&it.outcome).expect("serialisable"),
                    it.kind,
                    it.method,
                    it.conditions,
                    it.multiplicity.map(i64::from),
                    it.label,
                    it.energy_ev,
                    it.osc_strength,
                ],
            )
            .map_err(CampaignError::sqlite(&spath))?;
            if last_item != Some(it.item) {
                last_item = Some(it.item);
                match it.outcome {
                    MatchOutcome::Matched { .. } => sum.matched += 1,
                    MatchOutcome::Ambiguous { .. } => sum.ambiguous += 1,
                    MatchOutcome::Conflict { .. } => sum.conflict += 1,
                    MatchOutcome::Unmatched { .. } => sum.unmatched += 1,
                }
                rep.matches.push(it.outcome.clone());
            }
        }
        tx.commit().map_err(CampaignError::sqlite(&spath))?;
        rep.states = items.len();
        sum.states_stored += items.len();
        sum.files.push(rep);
    }
    Ok(sum)
}
