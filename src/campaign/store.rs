//! The campaign store: one SQLite file (WAL journal) that every stage reads and writes.
//!
//! Tables (schema version 2; version-1 stores are migrated on open):
//! - `meta(key, value)`: `app = lumisift`, `schema_version`.
//! - `runs`: one row per invocation (tool version, workflow text, parameters, shard).
//! - `candidates(seq, id, canonical_smiles, formula, mol_weight, heavy_atoms)`: one row per
//!   distinct molecule; `id` (unique) is the candidate identity (BLAKE3 of the canonical SMILES,
//!   see `chem::props`); rows are appended in order, so only the small `id` index takes random
//!   inserts.
//! - `tuples(tuple_key, architecture, fragments, candidate_id)`: every admitted combination with
//!   the candidate it built (provenance; several tuples may share a candidate). The key is
//!   `architecture|core|site assignment` (see `combine::Tuple::key`). Designed so a fast tier can
//!   fill tuples before any graph exists (`candidate_id` NULL). The index by candidate is built
//!   when first needed (export, merge), not during enumeration.
//! - `stage_chunks(stage, param_hash, chunk, n_tuples)`: done-marks, written in the same
//!   transaction as the chunk's rows, so a killed run resumes without loss or duplication.
//! - `stage_status(stage, param_hash, total_chunks, counts_json, updated_utc)`.
//! - `results(candidate_id, stage, param_hash, data)`: per-candidate results of later stages,
//!   keyed so re-running a stage with other parameters adds rows and never overwrites.
//! - (version 2) `qc_sources`: one row per imported file (content hash unique, so re-importing
//!   the same bytes is idempotent; format = program or `table`, partial flag, diagnostics);
//!   `qc_states(source_id, item, state, candidate_id, match_status, match_json, kind, method,
//!   conditions, multiplicity, label, energy_ev, osc_strength)`: every imported state or table
//!   row (item = calculation index or table line), with its match (candidate NULL when
//!   ambiguous, conflicting or unmatched, so a later ingest can match it); `calibrations`: each
//!   fitted calibration (kind, model and report as JSON).
//!
//! A file that is not SQLite, or SQLite without our `meta`, is refused before anything is
//! written to it.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

use rusqlite::{Connection, OpenFlags, OptionalExtension, params};

use super::error::CampaignError;

pub const SCHEMA_VERSION: u32 = 2;
/// SQLite `application_id` of campaign stores ("LUMS").
pub const APPLICATION_ID: i32 = 0x4C55_4D53;

/// Migrations: entry i upgrades a store from version i to i + 1.
const MIGRATIONS: &[&str] = &[
    // 0 -> 1: the initial schema.
    "CREATE TABLE meta(key TEXT PRIMARY KEY, value TEXT NOT NULL);
     CREATE TABLE runs(
        run_id INTEGER PRIMARY KEY,
        started_utc TEXT NOT NULL,
        tool_version TEXT NOT NULL,
        workflow_path TEXT NOT NULL,
        workflow_text TEXT NOT NULL,
        params_json TEXT NOT NULL,
        shard TEXT NOT NULL);
     CREATE TABLE candidates(
        seq INTEGER PRIMARY KEY,
        id TEXT NOT NULL UNIQUE,
        canonical_smiles TEXT NOT NULL,
        formula TEXT NOT NULL,
        mol_weight REAL NOT NULL,
        heavy_atoms INTEGER NOT NULL);
     CREATE TABLE tuples(
        tuple_key TEXT PRIMARY KEY,
        architecture TEXT NOT NULL,
        fragments TEXT NOT NULL,
        candidate_id TEXT) WITHOUT ROWID;
     CREATE TABLE stage_chunks(
        stage TEXT NOT NULL,
        param_hash TEXT NOT NULL,
        chunk INTEGER NOT NULL,
        n_tuples INTEGER NOT NULL,
        PRIMARY KEY(stage, param_hash, chunk)) WITHOUT ROWID;
     CREATE TABLE stage_status(
        stage TEXT NOT NULL,
        param_hash TEXT NOT NULL,
        total_chunks INTEGER NOT NULL,
        counts_json TEXT NOT NULL,
        updated_utc TEXT NOT NULL,
        PRIMARY KEY(stage, param_hash)) WITHOUT ROWID;
     CREATE TABLE results(
        candidate_id TEXT NOT NULL,
        stage TEXT NOT NULL,
        param_hash TEXT NOT NULL,
        data TEXT NOT NULL,
        PRIMARY KEY(candidate_id, stage, param_hash)) WITHOUT ROWID;",
    // 1 -> 2: imported quantum-chemistry / measured results and calibrations.
    "CREATE TABLE qc_sources(
        source_id INTEGER PRIMARY KEY,
        content_hash TEXT NOT NULL UNIQUE,
        path TEXT NOT NULL,
        format TEXT NOT NULL,
        version TEXT,
        method TEXT,
        partial INTEGER NOT NULL,
        imported_utc TEXT NOT NULL,
        diagnostics_json TEXT NOT NULL);
     CREATE TABLE qc_states(
        source_id INTEGER NOT NULL,
        item INTEGER NOT NULL,
        state INTEGER NOT NULL,
        candidate_id TEXT,
        match_status TEXT NOT NULL,
        match_json TEXT NOT NULL,
        kind TEXT NOT NULL,
        method TEXT,
        conditions TEXT,
        multiplicity INTEGER,
        label TEXT,
        energy_ev REAL NOT NULL,
        osc_strength REAL,
        PRIMARY KEY(source_id, item, state)) WITHOUT ROWID;
     CREATE INDEX qc_states_by_candidate ON qc_states(candidate_id);
     CREATE TABLE calibrations(
        calibration_id INTEGER PRIMARY KEY,
        kind TEXT NOT NULL,
        created_utc TEXT NOT NULL,
        n_points INTEGER NOT NULL,
        model_json TEXT NOT NULL,
        report_json TEXT NOT NULL);",
];

/// One row of an enumeration chunk.
#[derive(Debug, Clone, PartialEq)]
pub struct TupleRow {
    pub tuple_key: String,
    pub architecture: String,
    pub fragments: String,
    pub candidate_id: String,
    pub canonical_smiles: String,
    pub formula: String,
    pub mol_weight: f64,
    pub heavy_atoms: usize,
}

/// A processed chunk, written in one transaction with its done-mark.
#[derive(Debug, Clone)]
pub struct Chunk {
    pub stage: String,
    pub param_hash: String,
    pub index: u64,
    pub rows: Vec<TupleRow>,
}

pub struct Store {
    pub path: PathBuf,
    conn: Connection,
}

pub(crate) fn now_utc() -> String {
    // Seconds since the epoch; formatting a calendar date needs no extra dependency here.
    let secs = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_secs())
        .unwrap_or(0);
    format!("unix:{secs}")
}

impl Store {
    /// Open an existing store or create a new one. Refuses files that are not lumisift stores.
    pub fn open_or_create(path: &Path) -> Result<Store, CampaignError> {
        let exists = path.exists()
            && std::fs::metadata(path)
                .map(|m| m.len() > 0)
                .unwrap_or(false);
        if let Some(dir) = path.parent()
            && !dir.as_os_str().is_empty()
            && !dir.exists()
        {
            std::fs::create_dir_all(dir).map_err(|e| {
                CampaignError::Other(format!("{}: cannot create folder: {e}", dir.display()))
            })?;
        }
        let conn = Connection::open(path).map_err(CampaignError::sqlite(path))?;
        let mut store = Store {
            path: path.to_path_buf(),
            conn,
        };
        if exists {
            store.validate()?;
        }
        store.prepare()?;
        Ok(store)
    }

    /// Open an existing store (read-write) after checking it is ours.
    pub fn open_existing(path: &Path) -> Result<Store, CampaignError> {
        if !path.exists() {
            return Err(CampaignError::Other(format!(
                "{}: no such campaign store",
                path.display()
            )));
        }
        let conn = Connection::open_with_flags(
            path,
            OpenFlags::SQLITE_OPEN_READ_WRITE | OpenFlags::SQLITE_OPEN_NO_MUTEX,
        )
        .map_err(CampaignError::sqlite(path))?;
        let mut store = Store {
            path: path.to_path_buf(),
            conn,
        };
        store.validate()?;
        store.prepare()?;
        Ok(store)
    }

    /// Check, without writing, that the file is a lumisift store of a supported version.
    fn validate(&self) -> Result<(), CampaignError> {
        let path = &self.path;
        let app: i32 = self
            .conn
            .query_row("PRAGMA application_id", [], |r| r.get(0))
            .map_err(|e| CampaignError::NotADatabase {
                path: path.clone(),
                detail: e.to_string(),
            })?;
        let has_meta: bool = self
            .conn
            .query_row(
                "SELECT count(*) FROM sqlite_master WHERE type = 'table' AND name = 'meta'",
                [],
                |r| r.get::<_, i64>(0),
            )
            .map_err(|e| CampaignError::NotADatabase {
                path: path.clone(),
                detail: e.to_string(),
            })?
            > 0;
        if app != APPLICATION_ID || !has_meta {
            return Err(CampaignError::ForeignDatabase {
                path: path.clone(),
                detail: format!("application id {app:#x}, meta table present: {has_meta}"),
            });
        }
        let appname: Option<String> = self
            .conn
            .query_row("SELECT value FROM meta WHERE key = 'app'", [], |r| r.get(0))
            .optional()
            .map_err(CampaignError::sqlite(path))?;
        if appname.as_deref() != Some("lumisift") {
            return Err(CampaignError::ForeignDatabase {
                path: path.clone(),
                detail: "meta.app is not 'lumisift'".into(),
            });
        }
        let v = self.schema_version()?;
        if v > SCHEMA_VERSION {
            return Err(CampaignError::SchemaTooNew {
                path: path.clone(),
                found: v,
                supported: SCHEMA_VERSION,
            });
        }
        Ok(())
    }

    fn schema_version(&self) -> Result<u32, CampaignError> {
        let has_meta: i64 = self
            .conn
            .query_row(
                "SELECT count(*) FROM sqlite_master WHERE type = 'table' AND name = 'meta'",
                [],
                |r| r.get(0),
            )
            .map_err(CampaignError::sqlite(&self.path))?;
        if has_meta == 0 {
            return Ok(0);
        }
        let v: Option<String> = self
            .conn
            .query_row(
                "SELECT value FROM meta WHERE key = 'schema_version'",
                [],
                |r| r.get(0),
            )
            .optional()
            .map_err(CampaignError::sqlite(&self.path))?;
        Ok(v.and_then(|s| s.parse().ok()).unwrap_or(0))
    }

    /// Journal mode, and migrations up to the current schema.
    fn prepare(&mut self) -> Result<(), CampaignError> {
        let path = self.path.clone();
        let sq = CampaignError::sqlite(&path);
        self.conn
            .pragma_update(None, "journal_mode", "WAL")
            .map_err(&sq)?;
        self.conn
            .pragma_update(None, "synchronous", "NORMAL")
            .map_err(&sq)?;
        // 64 MiB page cache: keeps the candidate-id index of ~10^6 rows in memory; a fixed
        // ceiling, whatever the campaign size.
        self.conn
            .pragma_update(None, "cache_size", -65536)
            .map_err(&sq)?;
        self.conn
            .busy_timeout(std::time::Duration::from_secs(30))
            .map_err(&sq)?;
        let current = self.schema_version()?;
        for (v, sql) in MIGRATIONS.iter().enumerate().skip(current as usize) {
            let tx = self.conn.transaction().map_err(&sq)?;
            tx.execute_batch(sql).map_err(&sq)?;
            if v == 0 {
                tx.execute(
                    "INSERT INTO meta(key, value) VALUES ('app', 'lumisift')",
                    [],
                )
                .map_err(&sq)?;
                tx.pragma_update(None, "application_id", APPLICATION_ID)
                    .map_err(&sq)?;
            }
            tx.execute(
                "INSERT OR REPLACE INTO meta(key, value) VALUES ('schema_version', ?1)",
                [(v + 1).to_string()],
            )
            .map_err(&sq)?;
            tx.commit().map_err(&sq)?;
        }
        Ok(())
    }

    pub fn record_run(
        &self,
        workflow_path: &Path,
        workflow_text: &str,
        params_json: &str,
        shard: &str,
    ) -> Result<i64, CampaignError> {
        self.conn
            .execute(
                "INSERT INTO runs(started_utc, tool_version, workflow_path, workflow_text, params_json, shard)
                 VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
                params![
                    now_utc(),
                    env!("CARGO_PKG_VERSION"),
                    workflow_path.display().to_string(),
                    workflow_text,
                    params_json,
                    shard
                ],
            )
            .map_err(CampaignError::sqlite(&self.path))?;
        Ok(self.conn.last_insert_rowid())
    }

    pub fn done_chunks(
        &self,
        stage: &str,
        param_hash: &str,
    ) -> Result<BTreeSet<u64>, CampaignError> {
        let sq = CampaignError::sqlite(&self.path);
        let mut st = self
            .conn
            .prepare("SELECT chunk FROM stage_chunks WHERE stage = ?1 AND param_hash = ?2")
            .map_err(&sq)?;
        let rows = st
            .query_map(params![stage, param_hash], |r| r.get::<_, i64>(0))
            .map_err(&sq)?;
        let mut out = BTreeSet::new();
        for r in rows {
            out.insert(r.map_err(&sq)? as u64);
        }
        Ok(out)
    }

    pub fn set_stage_status(
        &self,
        stage: &str,
        param_hash: &str,
        total_chunks: u64,
        counts_json: &str,
    ) -> Result<(), CampaignError> {
        self.conn
            .execute(
                "INSERT OR REPLACE INTO stage_status(stage, param_hash, total_chunks, counts_json, updated_utc)
                 VALUES (?1, ?2, ?3, ?4, ?5)",
                params![stage, param_hash, total_chunks as i64, counts_json, now_utc()],
            )
            .map_err(CampaignError::sqlite(&self.path))?;
        Ok(())
    }

    /// Write a chunk's rows and its done-mark in one transaction.
    pub fn write_chunk(&mut self, chunk: &Chunk) -> Result<(), CampaignError> {
        let path = self.path.clone();
        let sq = CampaignError::sqlite(&path);
        let tx = self.conn.transaction().map_err(&sq)?;
        {
            let mut cand = tx
                .prepare_cached(
                    "INSERT OR IGNORE INTO candidates(id, canonical_smiles, formula, mol_weight, heavy_atoms)
                     VALUES (?1, ?2, ?3, ?4, ?5)",
                )
                .map_err(&sq)?;
            let mut tup = tx
                .prepare_cached(
                    "INSERT OR IGNORE INTO tuples(tuple_key, architecture, fragments, candidate_id)
                     VALUES (?1, ?2, ?3, ?4)",
                )
                .map_err(&sq)?;
            for r in &chunk.rows {
                cand.execute(params![
                    r.candidate_id,
                    r.canonical_smiles,
                    r.formula,
                    r.mol_weight,
                    r.heavy_atoms as i64
                ])
                .map_err(&sq)?;
                tup.execute(params![
                    r.tuple_key,
                    r.architecture,
                    r.fragments,
                    r.candidate_id
                ])
                .map_err(&sq)?;
            }
            tx.execute(
                "INSERT OR REPLACE INTO stage_chunks(stage, param_hash, chunk, n_tuples) VALUES (?1, ?2, ?3, ?4)",
                params![chunk.stage, chunk.param_hash, chunk.index as i64, chunk.rows.len() as i64],
            )
            .map_err(&sq)?;
        }
        tx.commit().map_err(&sq)?;
        Ok(())
    }

    /// Largest candidate sequence number (0 for an empty store).
    pub fn max_seq(&self) -> Result<u64, CampaignError> {
        let v: Option<i64> = self
            .conn
            .query_row("SELECT max(seq) FROM candidates", [], |r| r.get(0))
            .map_err(CampaignError::sqlite(&self.path))?;
        Ok(v.unwrap_or(0) as u64)
    }

    /// Candidates (id, canonical SMILES) with `lo <= seq < hi`, in seq order.
    pub fn candidates_in(&self, lo: u64, hi: u64) -> Result<Vec<(String, String)>, CampaignError> {
        let sq = CampaignError::sqlite(&self.path);
        let mut st = self
            .conn
            .prepare_cached(
                "SELECT id, canonical_smiles FROM candidates WHERE seq >= ?1 AND seq < ?2 ORDER BY seq",
            )
            .map_err(&sq)?;
        let rows = st
            .query_map(params![lo as i64, hi as i64], |r| {
                Ok((r.get(0)?, r.get(1)?))
            })
            .map_err(&sq)?;
        rows.collect::<Result<Vec<_>, _>>().map_err(&sq)
    }

    /// Write per-candidate results of a stage and the chunk's done-mark in one transaction.
    pub fn write_results(
        &mut self,
        stage: &str,
        param_hash: &str,
        chunk: u64,
        rows: &[(String, String)],
    ) -> Result<(), CampaignError> {
        let path = self.path.clone();
        let sq = CampaignError::sqlite(&path);
        let tx = self.conn.transaction().map_err(&sq)?;
        {
            let mut st = tx
                .prepare_cached(
                    "INSERT OR REPLACE INTO results(candidate_id, stage, param_hash, data) VALUES (?1, ?2, ?3, ?4)",
                )
                .map_err(&sq)?;
            for (id, data) in rows {
                st.execute(params![id, stage, param_hash, data])
                    .map_err(&sq)?;
            }
            tx.execute(
                "INSERT OR REPLACE INTO stage_chunks(stage, param_hash, chunk, n_tuples) VALUES (?1, ?2, ?3, ?4)",
                params![stage, param_hash, chunk as i64, rows.len() as i64],
            )
            .map_err(&sq)?;
        }
        tx.commit().map_err(&sq)
    }

    /// (distinct candidates, tuples) in the store.
    pub fn totals(&self) -> Result<(u64, u64), CampaignError> {
        let sq = CampaignError::sqlite(&self.path);
        let c: i64 = self
            .conn
            .query_row("SELECT count(*) FROM candidates", [], |r| r.get(0))
            .map_err(&sq)?;
        let t: i64 = self
            .conn
            .query_row("SELECT count(*) FROM tuples", [], |r| r.get(0))
            .map_err(&sq)?;
        Ok((c as u64, t as u64))
    }

    /// The index of tuples by candidate (for provenance look-ups), built on first need.
    pub fn ensure_provenance_index(&self) -> Result<(), CampaignError> {
        self.conn
            .execute_batch("CREATE INDEX IF NOT EXISTS tuples_by_candidate ON tuples(candidate_id)")
            .map_err(CampaignError::sqlite(&self.path))
    }

    pub fn connection(&self) -> &Connection {
        &self.conn
    }

    pub fn connection_mut(&mut self) -> &mut Connection {
        &mut self.conn
    }
}
