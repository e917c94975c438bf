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

/// Columns of [`estimates_csv`], in order.
pub const ESTIMATE_COLUMNS: [&str; 26] = [
    "id",
    "canonical_smiles",
    "param_hash",
    "record_version",
    "s1_ev",
    "t1_ev",
    "delta_est_ev",
    "f_s1",
    "avg_s1_ev",
    "avg_t1_ev",
    "avg_delta_est_ev",
    "avg_f_s1",
    "s1_label",
    "t1_label",
    "s1_minus_3le_ev",
    "k_r_s1",
    "k_isc_s1",
    "k_risc_s1",
    "tau_prompt_s",
    "tau_delayed_s",
    "phi_pl",
    "eqe_bound",
    "cie_x",
    "cie_y",
    "unvalidated",
    "flags_or_error",
];

/// Write every stored estimate (one row per candidate and parameter set, sorted), flattening
/// the record into [`ESTIMATE_COLUMNS`]; fields a record lacks (older versions, failed
/// candidates) are left empty and a failure's reason goes in the last column.
pub fn estimates_csv<W: Write>(conn: &Connection, out: W) -> Result<u64, String> {
    let mut w = csv::Writer::from_writer(out);
    w.write_record(ESTIMATE_COLUMNS)
        .map_err(|e| e.to_string())?;
    let mut n = 0;
    super::for_each_estimate(conn, |id, smi, hash, v| {
        let num = |p: &str| -> String {
            v.pointer(p)
                .and_then(|x| x.as_f64())
                .map(|x| format!("{x:.6e}"))
                .unwrap_or_default()
        };
        let text = |p: &str| -> String {
            v.pointer(p)
                .and_then(|x| x.as_str())
                .map(str::to_string)
                .unwrap_or_default()
        };
        let list = |p: &str| -> String {
            v.pointer(p)
                .and_then(|x| x.as_array())
                .map(|a| {
                    a.iter()
                        .filter_map(|s| s.as_str())
                        .collect::<Vec<_>>()
                        .join("; ")
                })
                .unwrap_or_default()
        };
        let last = match v.get("error").and_then(|e| e.as_str()) {
            Some(e) => format!("error: {e}"),
            None => list("/flags"),
        };
        w.write_record([
            id.to_string(),
            smi.to_string(),
            hash.to_string(),
            v.get("version").map(|x| x.to_string()).unwrap_or_default(),
            num("/s1_ev"),
            num("/t1_ev"),
            num("/delta_est_ev"),
            num("/osc_strength"),
            num("/avg_s1_ev"),
            num("/avg_t1_ev"),
            num("/avg_delta_est_ev"),
            num("/avg_osc_strength"),
            text("/s1_label"),
            text("/t1_label"),
            num("/s1_minus_3le_ev"),
            num("/photophysics/rates_effective/k_r"),
            num("/photophysics/rates_effective/k_isc"),
            num("/photophysics/rates_effective/k_risc"),
            num("/photophysics/kinetics/tau_prompt_s"),
            num("/photophysics/kinetics/tau_delayed_s"),
            num("/photophysics/kinetics/phi_pl"),
            num("/photophysics/kinetics/eqe_bound"),
            num("/photophysics/colour/x"),
            num("/photophysics/colour/y"),
            list("/unvalidated"),
            last,
        ])
        .map_err(|e| e.to_string())?;
        n += 1;
        Ok(())
    })?;
    w.flush().map_err(|e| e.to_string())?;
    Ok(n)
}
