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
