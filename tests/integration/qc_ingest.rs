//! Preparing QC jobs (`export --for-qc`), importing results (`ingest`) and matching them to
//! candidates, through the real binary.

use crate::support_bin::{bin, repo, succeed, temp_dir};
use lumisift::report::qcjobs::{JobFields, JobTemplate};

fn fields() -> JobFields {
    JobFields {
        id: "0123456789abcdef0123456789abcdef".into(),
        smiles: "N#Cc1ccccc1".into(),
        formula: "C7H5N".into(),
        charge: 0,
        multiplicity: 1,
        atoms: vec![
            ("C".into(), [0.0, 0.0, 0.0]),
            ("H".into(), [1.09, 0.0, -0.5]),
        ],
    }
}

#[test]
fn job_templates_fill_every_placeholder_and_name_bad_ones() {
    let t = JobTemplate::parse(
        "# job {{ id }} ({{formula}}, {{natoms}} atoms)\n# {{smiles}}\n\
         * xyz {{charge}} {{multiplicity}}\n{{coords}}\n*\nliteral {{{{ kept\n",
    )
    .unwrap();
    let out = t.render(&fields());
    assert_eq!(
        out,
        "# job 0123456789abcdef0123456789abcdef (C7H5N, 2 atoms)\n# N#Cc1ccccc1\n\
         * xyz 0 1\nC        0.000000       0.000000       0.000000\n\
         H        1.090000       0.000000      -0.500000\n*\nliteral {{ kept\n"
    );
    let e = JobTemplate::parse("line one\n  {{basis}} x\n").unwrap_err();
    assert!(
        e.contains("line 2, column 3") && e.contains("{{basis}}"),
        "{e}"
    );
    let e = JobTemplate::parse("a\nb {{id\n").unwrap_err();
    assert!(
        e.contains("line 2, column 3") && e.contains("without a closing"),
        "{e}"
    );
}

/// A small store: the D–A products of two donors and two acceptors.
fn small_store(tag: &str) -> (std::path::PathBuf, std::path::PathBuf) {
    let d = temp_dir(tag);
    let wf = d.join("wf.toml");
    std::fs::write(
        &wf,
        format!(
            r#"[campaign]
name = "qc-test"
store = "store.sqlite"
fragments = ["{frag}"]
stages = ["enumerate"]

[enumerate]
architectures = ["D-A"]
[enumerate.donors]
include = ["carbazol-9-yl", "diphenylamino"]
[enumerate.acceptors]
include = ["4-cyanophenyl", "pyridin-4-yl"]
"#,
            frag = repo().join("fragments").display()
        ),
    )
    .unwrap();
    succeed(["run".as_ref(), wf.as_os_str()]);
    (d.clone(), d.join("store.sqlite"))
}

fn candidates(store: &std::path::Path) -> Vec<(String, String)> {
    let c = rusqlite::Connection::open(store).unwrap();
    let mut st = c
        .prepare("SELECT id, canonical_smiles FROM candidates ORDER BY seq")
        .unwrap();
    st.query_map([], |r| Ok((r.get(0)?, r.get(1)?)))
        .unwrap()
        .map(Result::unwrap)
        .collect()
}

#[test]
fn export_for_qc_writes_geometries_inputs_and_a_manifest() {
    let (d, store) = small_store("forqc");
    let cands = candidates(&store);
    assert_eq!(cands.len(), 4);
    let tpl = d.join("job.inp");
    std::fs::write(
        &tpl,
        "! TD-DFT {{id}}\n* xyz {{charge}} {{multiplicity}}\n{{coords}}\n*\n",
    )
    .unwrap();
    // One id, one SMILES (non-canonical spelling), one not in the store.
    let sel = d.join("pick.txt");
    std::fs::write(
        &sel,
        format!(
            "# to compute\n{}\n{}\nc1ccccc1\n",
            cands[0].0,
            // The second candidate's SMILES written from a re-parse (same molecule).
            cands[1].1
        ),
    )
    .unwrap();
    let out_dir = d.join("jobs");
    let out = bin()
        .args(["export".as_ref(), store.as_os_str(), "--for-qc".as_ref()])
        .arg(&out_dir)
        .arg("--template")
        .arg(&tpl)
        .arg("--select")
        .arg(&sel)
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "one skipped: {err}");
    assert!(err.contains("skipped 'c1ccccc1'"), "{err}");
    for (id, smiles) in &cands[..2] {
        let xyz = std::fs::read_to_string(out_dir.join(format!("{id}.xyz"))).unwrap();
        let atoms = lumisift::geometry::parse_xyz(&xyz).unwrap();
        let inp = std::fs::read_to_string(out_dir.join(format!("{id}.inp"))).unwrap();
        assert!(inp.starts_with(&format!("! TD-DFT {id}\n* xyz 0 1\n")));
        assert_eq!(inp.lines().count(), atoms.len() + 3);
        // The geometry is the candidate's own: perceived back to its skeleton.
        let z: Vec<(u8, [f64; 3])> = atoms
            .iter()
            .map(|a| {
                (
                    lumisift::chem::element::from_symbol(&a.symbol).unwrap(),
                    a.position,
                )
            })
            .collect();
        use lumisift::geometry::perceive::*;
        let mol = lumisift::chem::parse_smiles(smiles).unwrap();
        assert_eq!(
            skeleton_key(&skeleton_from_coordinates(&z).unwrap()),
            skeleton_key(&skeleton_of(&mol))
        );
    }
    let manifest = std::fs::read_to_string(out_dir.join("manifest.csv")).unwrap();
    assert_eq!(manifest.lines().count(), 3, "{manifest}");
}

/// The shared QC samples (present in CI); `None` with a message where absent.
fn samples() -> Option<std::path::PathBuf> {
    let p = repo().join("../shared/qc-samples");
    if p.is_dir() {
        Some(p)
    } else {
        eprintln!("skipped: ../shared/qc-samples not present (a clone without the shared folder)");
        None
    }
}

#[test]
fn real_output_geometries_are_matched_to_their_molecule() {
    // The ORCA and Gaussian samples are TD-DFT runs on para-divinylbenzene (C10H10) and the
    // Gaussian CO run on carbon monoxide (qc-samples/README.md; reference geometries from
    // cclib 1.8.1). Perceived from the files' final geometries, each matches its molecule
    // among a few candidates, by geometry, and nothing else.
    use lumisift::qc::matching::{CandidateIndex, MatchBy, MatchOutcome};
    let Some(dir) = samples() else { return };
    let cands = [
        ("a".repeat(32), "C=Cc1ccc(C=C)cc1"),
        ("b".repeat(32), "C=Cc1cccc(C=C)c1"),
        ("c".repeat(32), "[C-]#[O+]"),
        ("d".repeat(32), "CCc1ccc(CC)cc1"),
    ];
    let mut index = CandidateIndex::new(cands.iter().map(|(i, s)| {
        let m = lumisift::chem::parse_smiles(s).unwrap();
        (i.clone(), lumisift::chem::canonical_smiles(&m))
    }));
    for (file, want) in [
        ("ORCA/dvb_td.out", &cands[0].0),
        ("Gaussian/dvb_td.out", &cands[0].0),
        ("QChem/dvb_td.out", &cands[0].0),
        ("Gaussian/CO_TD_delta.log", &cands[2].0),
    ] {
        let (res, _) = lumisift::qc::read_path(dir.join(file)).unwrap();
        let g = res.primary().unwrap().geometry.as_ref().unwrap();
        let atoms: Vec<(u8, [f64; 3])> = g
            .atomic_numbers
            .iter()
            .copied()
            .zip(g.coords_angstrom.iter().copied())
            .collect();
        assert_eq!(
            index.match_file(file, Some(&atoms)),
            MatchOutcome::Matched {
                candidate_id: want.clone(),
                by: MatchBy::Geometry
            },
            "{file}"
        );
    }
}

#[test]
fn ingest_stores_matches_reports_and_is_idempotent() {
    let Some(dir) = samples() else { return };
    let (d, store) = small_store("ingest");
    let cands = candidates(&store);
    // A neutral table naming two candidates (by id and by SMILES), one unknown molecule and a
    // bad row; a real ORCA output renamed with a candidate's id (its geometry is another
    // molecule: a conflict, not stored against either); the negative case (no states); a job
    // input in the folder (skipped).
    let qc = d.join("results");
    std::fs::create_dir_all(&qc).unwrap();
    std::fs::write(
        qc.join("table.csv"),
        format!(
            "candidate,kind,method,conditions,state_label,multiplicity,energy_ev,osc_strength\n\
             {},vertical_absorption,TD-test,gas,S1,1,3.10,0.05\n\
             {},vertical_absorption,TD-test,gas,T1,3,2.90,\n\
             c1ccc2ccccc2c1,vertical_absorption,TD-test,gas,S1,1,4.0,0.1\n\
             {},no_such_kind,TD-test,gas,S1,1,3.0,0.1\n",
            cands[0].0, cands[1].1, cands[0].0
        ),
    )
    .unwrap();
    std::fs::copy(
        dir.join("ORCA/dvb_td.out"),
        qc.join(format!("job-{}.out", cands[2].0)),
    )
    .unwrap();
    std::fs::copy(dir.join("ORCA/dvb_sp.out"), qc.join("single-point.out")).unwrap();
    std::fs::write(qc.join("job.inp"), "! not an output\n").unwrap();
    let run = || {
        let out = bin()
            .args([
                "ingest".as_ref(),
                store.as_os_str(),
                qc.as_os_str(),
                "--json".as_ref(),
            ])
            .output()
            .unwrap();
        serde_json::from_slice::<serde_json::Value>(&out.stdout)
            .unwrap_or_else(|_| panic!("{}", String::from_utf8_lossy(&out.stderr)))
    };
    let first = run();
    let status = |v: &serde_json::Value, end: &str| -> String {
        v["files"]
            .as_array()
            .unwrap()
            .iter()
            .find(|f| f["path"].as_str().unwrap().ends_with(end))
            .map(|f| f["status"].as_str().unwrap().to_string())
            .unwrap()
    };
    assert_eq!(status(&first, "table.csv"), "stored");
    assert_eq!(status(&first, ".inp"), "skipped");
    assert_eq!(status(&first, "single-point.out"), "failed");
    assert_eq!(first["matched"], 2, "{first:#}");
    assert_eq!(first["unmatched"], 1);
    assert_eq!(first["conflict"], 1);
    let c = rusqlite::Connection::open(&store).unwrap();
    let n: i64 = c
        .query_row(
            "SELECT count(*) FROM qc_states WHERE match_status = 'matched'",
            [],
            |r| r.get(0),
        )
        .unwrap();
    assert_eq!(n, 2);
    let conflict_stored: i64 = c
        .query_row(
            "SELECT count(*) FROM qc_states WHERE match_status = 'conflict' AND candidate_id IS NULL",
            [],
            |r| r.get(0),
        )
        .unwrap();
    assert_eq!(
        conflict_stored, 10,
        "the ORCA file's 10 states, held unmatched"
    );
    // Again: nothing new for the matched file; unmatched sources are matched again.
    let second = run();
    let total: i64 = c
        .query_row("SELECT count(*) FROM qc_states", [], |r| r.get(0))
        .unwrap();
    assert_eq!(total, 13, "3 table rows + 10 ORCA states, no duplicates");
    assert_eq!(status(&second, "table.csv"), "rematched");
    // --show reads without a store.
    let out = bin()
        .args(["ingest", "--show", "--json"])
        .arg(dir.join("ORCA/dvb_td.out"))
        .output()
        .unwrap();
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(
        v[0]["calculations"][0]["states"].as_array().unwrap().len(),
        10
    );
    assert_eq!(v[0]["calculations"][0]["natoms"], 20);
}
