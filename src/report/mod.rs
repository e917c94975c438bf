//! Writers of tables and files for people and other programs. Only this layer writes CSV.

pub mod export;
pub mod figures;
pub mod html;
pub mod inspect;
pub mod molinfo;
pub mod pairs;
pub mod qcjobs;

use rusqlite::Connection;

/// Stream every stored estimate record of a campaign store (stage `estimate`), ordered by
/// candidate id, then parameter hash: `f(candidate id, canonical SMILES, parameter hash,
/// record)` with the record's JSON parsed. Stops at the first error (a database error, a
/// record that is not JSON, or `f`'s own).
pub fn for_each_estimate(
    conn: &Connection,
    mut f: impl FnMut(&str, &str, &str, &serde_json::Value) -> Result<(), String>,
) -> Result<(), String> {
    let mut st = conn
        .prepare(
            "SELECT r.candidate_id, c.canonical_smiles, r.param_hash, r.data
             FROM results r JOIN candidates c ON c.id = r.candidate_id
             WHERE r.stage = 'estimate' ORDER BY r.candidate_id, r.param_hash",
        )
        .map_err(|e| e.to_string())?;
    let mut rows = st.query([]).map_err(|e| e.to_string())?;
    while let Some(r) = rows.next().map_err(|e| e.to_string())? {
        let (id, smi, hash, data): (String, String, String, String) = (
            r.get(0).map_err(|e| e.to_string())?,
            r.get(1).map_err(|e| e.to_string())?,
            r.get(2).map_err(|e| e.to_string())?,
            r.get(3).map_err(|e| e.to_string())?,
        );
        let v: serde_json::Value =
            serde_json::from_str(&data).map_err(|e| format!("{id}: stored record: {e}"))?;
        f(&id, &smi, &hash, &v)?;
    }
    Ok(())
}

/// Every candidate of a store as (id, canonical SMILES), in store order.
pub fn store_candidates(conn: &Connection) -> Result<Vec<(String, String)>, String> {
    let mut st = conn
        .prepare("SELECT id, canonical_smiles FROM candidates ORDER BY seq")
        .map_err(|e| e.to_string())?;
    let rows = st
        .query_map([], |r| Ok((r.get::<_, String>(0)?, r.get::<_, String>(1)?)))
        .map_err(|e| e.to_string())?;
    rows.collect::<Result<Vec<_>, _>>()
        .map_err(|e| e.to_string())
}
