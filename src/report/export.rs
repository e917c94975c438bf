//! Export of a campaign store's candidates as CSV (with provenance) and as a SMILES file.

use std::io::Write;

use rusqlite::Connection;

/// Write every candidate, sorted by id, with all its provenances (tuple keys, sorted, `;`-joined)
/// and architectures. Columns: `id,canonical_smiles,formula,mol_weight,heavy_atoms,
/// architectures,n_tuples,provenance`.
pub fn candidates_csv<W: Write>(conn: &Connection, out: W) -> Result<u64, String> {
    let mut w = csv::Writer::from_writer(out);
    w.write_record([
        "id",
        "canonical_smiles",
        "formula",
        "mol_weight",
        "heavy_atoms",
        "architectures",
        "n_tuples",
        "provenance",
    ])
    .map_err(|e| e.to_string())?;
    let mut n = 0;
    for_each_candidate(conn, |row| {
        w.write_record([
            row.id.as_str(),
            &row.smiles,
            &row.formula,
            &format!("{:.4}", row.mol_weight),
            &row.heavy_atoms.to_string(),
            &row.architectures.join(";"),
            &row.provenance.len().to_string(),
            &row.provenance.join(";"),
        ])
        .map_err(|e| e.to_string())?;
        n += 1;
        Ok(())
    })?;
    w.flush().map_err(|e| e.to_string())?;
    Ok(n)
}

/// Write `SMILES<TAB>id` lines, sorted by id.
pub fn candidates_smi<W: Write>(conn: &Connection, mut out: W) -> Result<u64, String> {
    let mut n = 0;
    for_each_candidate(conn, |row| {
        writeln!(out, "{}\t{}", row.smiles, row.id).map_err(|e| e.to_string())?;
        n += 1;
        Ok(())
    })?;
    out.flush().map_err(|e| e.to_string())?;
    Ok(n)
}

struct Row {
    id: String,
    smiles: String,
    formula: String,
    mol_weight: f64,
    heavy_atoms: i64,
    architectures: Vec<String>,
    provenance: Vec<String>,
}

/// Streams candidates joined with their tuples (ordered by id, then tuple key), grouping the
/// tuples of each candidate; memory holds one candidate at a time.
fn for_each_candidate(
    conn: &Connection,
    mut f: impl FnMut(&Row) -> Result<(), String>,
) -> Result<(), String> {
    let mut st = conn
        .prepare(
            "SELECT c.id, c.canonical_smiles, c.formula, c.mol_weight, c.heavy_atoms,
                    t.tuple_key, t.architecture
             FROM candidates c LEFT JOIN tuples t ON t.candidate_id = c.id
             ORDER BY c.id, t.tuple_key",
        )
        .map_err(|e| e.to_string())?;
    let mut rows = st.query([]).map_err(|e| e.to_string())?;
    let mut cur: Option<Row> = None;
    while let Some(r) = rows.next().map_err(|e| e.to_string())? {
        let id: String = r.get(0).map_err(|e| e.to_string())?;
        if cur.as_ref().is_some_and(|c| c.id != id) {
            f(cur.as_ref().expect("checked"))?;
            cur = None;
        }
        if cur.is_none() {
            cur = Some(Row {
                id: id.clone(),
                smiles: r.get(1).map_err(|e| e.to_string())?,
                formula: r.get(2).map_err(|e| e.to_string())?,
                mol_weight: r.get(3).map_err(|e| e.to_string())?,
                heavy_atoms: r.get(4).map_err(|e| e.to_string())?,
                architectures: Vec::new(),
                provenance: Vec::new(),
            });
        }
        let c = cur.as_mut().expect("set above");
        if let Some(key) = r.get::<_, Option<String>>(5).map_err(|e| e.to_string())? {
            c.provenance.push(key);
        }
        if let Some(a) = r.get::<_, Option<String>>(6).map_err(|e| e.to_string())?
            && !c.architectures.contains(&a)
        {
            c.architectures.push(a);
        }
    }
    if let Some(c) = cur {
        f(&c)?;
    }
    Ok(())
}
