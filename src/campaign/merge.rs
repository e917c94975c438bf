//! Merging shard stores into one store. The rows of candidates, tuples, results and chunk
//! done-marks are unions (inserts that ignore rows already present, which are identical by
//! construction), so the merge of shards 1..N equals the store of an unsharded run.

use std::path::{Path, PathBuf};

use rusqlite::{Connection, OpenFlags, params};
use serde::Serialize;

use super::error::CampaignError;
use super::store::{APPLICATION_ID, SCHEMA_VERSION, Store};

#[derive(Debug, Clone, Default, Serialize)]
pub struct MergeSummary {
    pub shards: usize,
    pub candidates: u64,
    pub tuples: u64,
    /// Stages whose chunks are not all present: (stage, param_hash, present, total).
    pub incomplete: Vec<(String, String, u64, u64)>,
}

/// Check, read-only, that `path` is a lumisift store of the current schema version.
fn check_shard(path: &Path) -> Result<(), CampaignError> {
    let conn = Connection::open_with_flags(path, OpenFlags::SQLITE_OPEN_READ_ONLY)
        .map_err(CampaignError::sqlite(path))?;
    let app: i32 = conn
        .query_row("PRAGMA application_id", [], |r| r.get(0))
        .map_err(|e| CampaignError::NotADatabase {
            path: path.to_path_buf(),
            detail: e.to_string(),
        })?;
    if app != APPLICATION_ID {
        return Err(CampaignError::ForeignDatabase {
            path: path.to_path_buf(),
            detail: format!("application id {app:#x}"),
        });
    }
    let v: String = conn
        .query_row(
            "SELECT value FROM meta WHERE key = 'schema_version'",
            [],
            |r| r.get(0),
        )
        .map_err(|e| CampaignError::ForeignDatabase {
            path: path.to_path_buf(),
            detail: e.to_string(),
        })?;
    if v != SCHEMA_VERSION.to_string() {
        return Err(CampaignError::Other(format!(
            "{}: schema version {v}; open it once with this lumisift to migrate it (expects {SCHEMA_VERSION})",
            path.display()
        )));
    }
    Ok(())
}

/// Merge `shards` into `out` (created if missing; an existing store gains the rows).
pub fn merge(out: &Path, shards: &[PathBuf]) -> Result<MergeSummary, CampaignError> {
    if shards.is_empty() {
        return Err(CampaignError::Other(
            "merge: name at least one shard store".into(),
        ));
    }
    for s in shards {
        if !s.exists() {
            return Err(CampaignError::Other(format!(
                "{}: no such shard store",
                s.display()
            )));
        }
        if s.canonicalize().ok() == out.canonicalize().ok() {
            return Err(CampaignError::Other(format!(
                "{}: the output cannot also be a shard",
                s.display()
            )));
        }
        check_shard(s)?;
    }
    let mut store = Store::open_or_create(out)?;
    let conn = store.connection_mut();
    let sq = CampaignError::sqlite(out);
    for s in shards {
        conn.execute(
            "ATTACH DATABASE ?1 AS shard",
            params![s.display().to_string()],
        )
        .map_err(&sq)?;
        let tx = conn.transaction().map_err(&sq)?;
        tx.execute_batch(
            "INSERT OR IGNORE INTO candidates(id, canonical_smiles, formula, mol_weight, heavy_atoms)
                SELECT id, canonical_smiles, formula, mol_weight, heavy_atoms FROM shard.candidates ORDER BY seq;
             INSERT OR IGNORE INTO tuples SELECT * FROM shard.tuples;
             INSERT OR IGNORE INTO stage_chunks SELECT * FROM shard.stage_chunks;
             INSERT OR IGNORE INTO stage_status SELECT * FROM shard.stage_status;
             INSERT OR IGNORE INTO results SELECT * FROM shard.results;
             INSERT INTO runs(started_utc, tool_version, workflow_path, workflow_text, params_json, shard)
                SELECT started_utc, tool_version, workflow_path, workflow_text, params_json, shard
                FROM shard.runs;",
        )
        .map_err(&sq)?;
        tx.commit().map_err(&sq)?;
        conn.execute("DETACH DATABASE shard", []).map_err(&sq)?;
    }
    let mut incomplete = Vec::new();
    {
        let mut st = conn
            .prepare(
                "SELECT s.stage, s.param_hash, s.total_chunks,
                        (SELECT count(*) FROM stage_chunks c WHERE c.stage = s.stage AND c.param_hash = s.param_hash)
                 FROM stage_status s ORDER BY s.stage, s.param_hash",
            )
            .map_err(&sq)?;
        let rows = st
            .query_map([], |r| {
                Ok((
                    r.get::<_, String>(0)?,
                    r.get::<_, String>(1)?,
                    r.get::<_, i64>(2)?,
                    r.get::<_, i64>(3)?,
                ))
            })
            .map_err(&sq)?;
        for r in rows {
            let (stage, hash, total, present) = r.map_err(&sq)?;
            if present < total {
                incomplete.push((stage, hash, present as u64, total as u64));
            }
        }
    }
    let (candidates, tuples) = store.totals()?;
    Ok(MergeSummary {
        shards: shards.len(),
        candidates,
        tuples,
        incomplete,
    })
}
