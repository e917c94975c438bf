//! The campaign runner end to end through the real binary: resume after SIGKILL, shards and
//! merge, export, and bad inputs (each a clear error naming file and line or key, no damage).

use std::path::{Path, PathBuf};
use std::process::Stdio;
use std::time::{Duration, Instant};

use rusqlite::{Connection, OpenFlags};

use crate::support_bin::{bin, repo, succeed, temp_dir};

/// A workflow over the shipped library, limited to a few thousand tuples, small chunks.
fn workflow(dir: &Path, chunk: usize, extra: &str) -> PathBuf {
    let text = format!(
        r#"[campaign]
name = "test"
store = "store.sqlite"
fragments = ["{frag}"]
chunk_size = {chunk}

[enumerate]
architectures = ["D-A", "D-B-A", "D-A-D", "Dn-A"]
max_mol_weight = 900.0
{extra}
[enumerate.donors]
exclude = ["3-6-bis-carbazol-9-yl-carbazol-9-yl"]
[enumerate.bridges]
include = ["1-4-phenylene", "2-methyl-1-4-phenylene", "pyridine-2-5-diyl", "2-5-dimethyl-1-4-phenylene"]
"#,
        frag = repo().join("fragments").display()
    );
    let p = dir.join("wf.toml");
    std::fs::write(&p, text).unwrap();
    p
}

fn run(wf: &Path, args: &[&str]) -> std::process::Output {
    let mut all: Vec<&std::ffi::OsStr> = vec!["run".as_ref(), wf.as_os_str()];
    all.extend(args.iter().map(|a| std::ffi::OsStr::new(*a)));
    succeed(all)
}

/// All rows of the tables that define a campaign's content, sorted.
fn content(store: &Path) -> (Vec<String>, Vec<String>, Vec<String>) {
    let c = Connection::open_with_flags(store, OpenFlags::SQLITE_OPEN_READ_ONLY).unwrap();
    let q = |sql: &str| -> Vec<String> {
        let mut st = c.prepare(sql).unwrap();
        st.query_map([], |r| r.get::<_, String>(0))
            .unwrap()
            .map(|x| x.unwrap())
            .collect()
    };
    (
        q(
            "SELECT id || '|' || canonical_smiles || '|' || formula || '|' || printf('%.6f', mol_weight) || '|' || heavy_atoms FROM candidates ORDER BY id",
        ),
        q(
            "SELECT tuple_key || '|' || architecture || '|' || fragments || '|' || candidate_id FROM tuples ORDER BY tuple_key",
        ),
        q(
            "SELECT stage || '|' || param_hash || '|' || chunk || '|' || n_tuples FROM stage_chunks ORDER BY stage, param_hash, chunk",
        ),
    )
}

fn chunks_done(store: &Path) -> i64 {
    let Ok(c) = Connection::open_with_flags(store, OpenFlags::SQLITE_OPEN_READ_ONLY) else {
        return 0;
    };
    c.query_row("SELECT count(*) FROM stage_chunks", [], |r| r.get(0))
        .unwrap_or(0)
}

#[test]
fn killed_run_resumes_to_the_same_rows_and_shards_merge_to_the_same_rows() {
    // Reference: one uninterrupted run.
    let d_ref = temp_dir("ref");
    let wf_ref = workflow(&d_ref, 16, "");
    run(&wf_ref, &[]);
    let reference = content(&d_ref.join("store.sqlite"));
    assert!(reference.0.len() > 1000, "{} candidates", reference.0.len());
    let total_chunks = reference.2.len() as i64;

    // Killed with SIGKILL part-way, then resumed.
    let d = temp_dir("kill");
    let wf = workflow(&d, 16, "");
    let store = d.join("store.sqlite");
    let mut child = bin()
        .arg("run")
        .arg(&wf)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let t0 = Instant::now();
    while chunks_done(&store) < 3 && t0.elapsed() < Duration::from_secs(120) {
        std::thread::sleep(Duration::from_millis(2));
    }
    child.kill().unwrap(); // SIGKILL on Unix
    child.wait().unwrap();
    let partial = chunks_done(&store);
    assert!(partial >= 3, "the run was killed before it wrote anything");
    assert!(
        partial < total_chunks,
        "the run finished ({partial} of {total_chunks} chunks) before it could be killed"
    );
    let out = run(&wf, &[]);
    let log = String::from_utf8_lossy(&out.stderr);
    assert!(log.contains("already done"), "{log}");
    assert_eq!(content(&store), reference, "resumed run differs");

    // Shards 1..3 into separate stores, merged.
    let d_sh = temp_dir("shards");
    let wf_sh = workflow(&d_sh, 16, "");
    let mut shard_stores = Vec::new();
    for k in 1..=3 {
        let s = d_sh.join(format!("shard{k}.sqlite"));
        run(
            &wf_sh,
            &["--shard", &format!("{k}/3"), "--store", s.to_str().unwrap()],
        );
        shard_stores.push(s);
    }
    let merged = d_sh.join("merged.sqlite");
    let out = bin()
        .arg("merge")
        .arg(&merged)
        .args(&shard_stores)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert_eq!(
        content(&merged),
        reference,
        "merged shards differ from one run"
    );

    // A missing shard is reported, not silently accepted.
    let partial_merge = d_sh.join("partial.sqlite");
    let out = bin()
        .arg("merge")
        .arg(&partial_merge)
        .args(&shard_stores[..2])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("chunks present"));
}

#[test]
fn export_writes_candidates_with_sorted_provenance() {
    let d = temp_dir("export");
    let wf = workflow(&d, 256, "");
    run(&wf, &[]);
    let csv_path = d.join("out.csv");
    let smi_path = d.join("out.smi");
    succeed([
        "export".as_ref(),
        d.join("store.sqlite").as_os_str(),
        "--csv".as_ref(),
        csv_path.as_os_str(),
        "--smi".as_ref(),
        smi_path.as_os_str(),
    ]);
    let mut rdr = csv::Reader::from_path(&csv_path).unwrap();
    let mut n = 0;
    let mut multi = 0;
    let mut prev_id = String::new();
    for r in rdr.records() {
        let r = r.unwrap();
        assert!(r[0] > *prev_id, "sorted by id");
        prev_id = r[0].to_string();
        let prov: Vec<&str> = r[7].split(';').collect();
        assert_eq!(prov.len(), r[6].parse::<usize>().unwrap());
        let mut sorted = prov.clone();
        sorted.sort();
        assert_eq!(prov, sorted, "provenance sorted");
        if prov.len() > 1 {
            multi += 1;
        }
        // The canonical SMILES reads back to itself.
        let m = lumisift::chem::parse_smiles(&r[1]).unwrap();
        assert_eq!(lumisift::chem::canonical_smiles(&m), &r[1]);
        n += 1;
    }
    assert!(n > 1000);
    assert!(
        multi > 0,
        "D-A-D and Dn-A share molecules: some candidates have two routes"
    );
    let smi = std::fs::read_to_string(&smi_path).unwrap();
    assert_eq!(smi.lines().count(), n);
}

#[test]
fn sampling_is_seeded_and_capped() {
    let d1 = temp_dir("sample1");
    let d2 = temp_dir("sample2");
    let d3 = temp_dir("sample3");
    run(&workflow(&d1, 64, "sample = 300\nseed = 7"), &[]);
    run(&workflow(&d2, 64, "sample = 300\nseed = 7"), &[]);
    run(&workflow(&d3, 64, "sample = 300\nseed = 8"), &[]);
    let a = content(&d1.join("store.sqlite"));
    let b = content(&d2.join("store.sqlite"));
    let c = content(&d3.join("store.sqlite"));
    assert_eq!(a.1.len(), 300);
    assert_eq!(a, b, "same seed, same sample");
    assert_ne!(a.1, c.1, "another seed, another sample");
}

/// One `[[fragment]]` entry as TOML text.
fn entry(id: &str, role: &str, smiles: &str, handle: &str) -> String {
    format!(
        "[[fragment]]\nid = \"{id}\"\nname = \"{id}\"\nrole = \"{role}\"\nsmiles = \"{smiles}\"\nhandle = \"{handle}\"\n"
    )
}

fn expect_error(args: &[&str], needles: &[&str]) {
    let out = bin().args(args).output().unwrap();
    assert!(!out.status.success(), "{args:?} should fail");
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(!err.contains("panicked"), "{err}");
    for n in needles {
        assert!(err.contains(n), "expected '{n}' in: {err}");
    }
}

#[test]
fn bad_fragment_files_are_reported_with_file_line_and_reason() {
    let d = temp_dir("badfrag");
    let f = d.join("bad.toml");
    std::fs::write(
        &f,
        r#"# line 1
[[fragment]]
id = "ok-donor"
name = "diphenylamino"
role = "donor"
smiles = "[*:1]N(c1ccccc1)c1ccccc1"
handle = "n-h"

[[fragment]]
id = "bridge-one-site"
name = "phenyl"
role = "bridge"
smiles = "[*:1]c1ccccc1"
handle = "aryl-halide"

[[fragment]]
id = "broken"
name = "broken"
role = "acceptor"
smiles = "[*:1]c1ccccc"
handle = "aryl-halide"

[[fragment]]
id = "gap"
name = "gap"
role = "acceptor"
smiles = "[*:1]c1ccc([*:3])cc1"
handle = "aryl-halide"

[[fragment]]
id = "double-site"
name = "double-site"
role = "acceptor"
smiles = "[*:1]=C1CCCCC1"
handle = "none"
"#,
    )
    .unwrap();
    let name = f.display().to_string();
    expect_error(
        &["fragments", "check", &name],
        &[
            &format!(
                "{name}:9: fragment 'bridge-one-site': a bridge needs 2 attachment points, found 1"
            ),
            &format!("{name}:16: fragment 'broken': SMILES"),
            "never closed",
            &format!("{name}:23: fragment 'gap'"),
            "without gaps",
            &format!("{name}:30: fragment 'double-site'"),
            "single bond",
        ],
    );
    // Unknown role and unknown key: the TOML layer names the line.
    let g = d.join("role.toml");
    std::fs::write(&g, entry("x", "donr", "[*:1]C", "none")).unwrap();
    expect_error(
        &["fragments", "check", g.to_str().unwrap()],
        &[":4:", "donr"],
    );
    let h = d.join("key.toml");
    std::fs::write(
        &h,
        entry("x", "donor", "[*:1]C", "none").replace("smiles", "smile"),
    )
    .unwrap();
    expect_error(
        &["fragments", "check", h.to_str().unwrap()],
        &[":5:", "smile"],
    );
    // Duplicates across files.
    let i = d.join("dup.toml");
    std::fs::write(
        &i,
        entry("ok-donor", "donor", "[*:1]N(c1ccccc1)c1ccccc1", "n-h"),
    )
    .unwrap();
    let j = d.join("dup2.toml");
    std::fs::write(
        &j,
        entry("other", "donor", "c1ccccc1N([*:1])c1ccccc1", "n-h")
            + &entry("ok-donor", "donor", "[*:1]n1ccnc1", "n-h"),
    )
    .unwrap();
    expect_error(
        &[
            "fragments",
            "check",
            i.to_str().unwrap(),
            j.to_str().unwrap(),
        ],
        &["duplicate id", "same structure as fragment 'ok-donor'"],
    );
    // The shipped library is valid.
    let out = bin()
        .args(["fragments", "check"])
        .arg(repo().join("fragments"))
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

#[test]
fn bad_workflows_and_stores_are_refused_without_damage() {
    let d = temp_dir("badwf");
    // Typo'd key.
    let wf = workflow(&d, 16, "max_molweight = 500.0");
    expect_error(
        &["run", wf.to_str().unwrap()],
        &[&wf.display().to_string(), "line 10", "max_molweight"],
    );
    // Unknown architecture, unknown fragment id, missing fragment folder, missing workflow.
    let small = |name: &str, frags: &str, enumerate: &str| {
        let p = d.join(name);
        std::fs::write(
            &p,
            format!(
                "[campaign]\nname = \"x\"\nstore = \"s.sqlite\"\nfragments = [\"{frags}\"]\n[enumerate]\n{enumerate}"
            ),
        )
        .unwrap();
        p
    };
    let shipped = repo().join("fragments").display().to_string();
    let wf = small("arch.toml", &shipped, "architectures = [\"D-X\"]\n");
    expect_error(
        &["run", wf.to_str().unwrap()],
        &["unknown architecture 'D-X'"],
    );
    let wf2 = small(
        "id.toml",
        &shipped,
        "architectures = [\"D-A\"]\n[enumerate.donors]\ninclude = [\"no-such-donor\"]\n",
    );
    expect_error(
        &["run", wf2.to_str().unwrap()],
        &["unknown fragment id 'no-such-donor'"],
    );
    expect_error(&["run", "/nonexistent/wf.toml"], &["/nonexistent/wf.toml"]);
    let wf3 = small(
        "nofrag.toml",
        "/nonexistent/frags",
        "architectures = [\"D-A\"]\n",
    );
    expect_error(&["run", wf3.to_str().unwrap()], &["/nonexistent/frags"]);
    // A typo in the rate model of the estimate stage is named too.
    let wf4 = small(
        "rates.toml",
        &shipped,
        "architectures = [\"D-A\"]\n[estimate]\n[estimate.rates]\nrefractive_indx = 1.8\n",
    );
    expect_error(&["run", wf4.to_str().unwrap()], &["refractive_indx"]);

    // A corrupt file and a foreign SQLite database as the store: refused, bytes unchanged.
    let good = workflow(&d, 16, "");
    let junk = d.join("junk.sqlite");
    std::fs::write(&junk, b"this is not a database, just text that happens to be long enough to look like a page header".repeat(50)).unwrap();
    let before = std::fs::read(&junk).unwrap();
    expect_error(
        &[
            "run",
            good.to_str().unwrap(),
            "--store",
            junk.to_str().unwrap(),
        ],
        &[&junk.display().to_string(), "not a SQLite database"],
    );
    assert_eq!(
        std::fs::read(&junk).unwrap(),
        before,
        "corrupt file was modified"
    );
    let foreign = d.join("foreign.sqlite");
    {
        let c = Connection::open(&foreign).unwrap();
        c.execute_batch("CREATE TABLE customers(id INTEGER PRIMARY KEY, name TEXT); INSERT INTO customers(name) VALUES ('x');").unwrap();
    }
    let before = std::fs::read(&foreign).unwrap();
    expect_error(
        &[
            "run",
            good.to_str().unwrap(),
            "--store",
            foreign.to_str().unwrap(),
        ],
        &[
            &foreign.display().to_string(),
            "not a lumisift campaign store",
        ],
    );
    assert_eq!(
        std::fs::read(&foreign).unwrap(),
        before,
        "foreign database was modified"
    );
    expect_error(
        &["export", foreign.to_str().unwrap()],
        &["not a lumisift campaign store"],
    );
    expect_error(
        &[
            "merge",
            d.join("m.sqlite").to_str().unwrap(),
            foreign.to_str().unwrap(),
        ],
        &["not a lumisift campaign store"],
    );
    expect_error(
        &["run", good.to_str().unwrap(), "--shard", "4/3"],
        &["1 <= K <= N"],
    );
}

/// The demo workflow with its store and report redirected into `dir`.
fn demo_workflow_in(dir: &Path) -> PathBuf {
    let text = std::fs::read_to_string(repo().join("workflows/demo.toml"))
        .unwrap()
        .replace("\"../demo-output/demo.sqlite\"", "\"demo.sqlite\"")
        .replace("\"../demo-output/report\"", "\"report\"")
        .replace("\"../", &format!("\"{}/", repo().display()));
    let wf = dir.join("demo.toml");
    std::fs::write(&wf, text).unwrap();
    wf
}

#[test]
fn the_demo_runs_every_stage_and_twice_gives_the_same_results() {
    // The README's first command, redirected to temporary folders: every stage runs, the
    // invented results are matched and calibrated, the shortlist is not empty and carries
    // the safety notice; a second run in the same store and a run in a fresh store give the
    // same shortlist and the same page (up to the folder names in its provenance lines).
    let d1 = temp_dir("demo1");
    let d2 = temp_dir("demo2");
    let (w1, w2) = (demo_workflow_in(&d1), demo_workflow_in(&d2));
    let out = succeed([
        std::ffi::OsStr::new("run"),
        w1.as_os_str(),
        "--no-bar".as_ref(),
    ]);
    let err = String::from_utf8_lossy(&out.stderr);
    for needle in [
        "screen:",
        "estimate:",
        "ingest: 1 file(s), 32 state(s) stored; matched 32",
        "calibrate vertical_absorption: 16 points",
        "shortlist:",
        "not safety data",
        "report: wrote",
    ] {
        assert!(err.contains(needle), "{needle}: {err}");
    }
    let short1 = std::fs::read_to_string(d1.join("report/shortlist.csv")).unwrap();
    assert!(short1.lines().count() >= 4, "{short1}");
    let html1 = std::fs::read_to_string(d1.join("report/report.html")).unwrap();
    assert!(html1.contains("id=\"short-1\"") && html1.contains("safety data sheets"));
    let json1 = std::fs::read_to_string(d1.join("report/shortlist.json")).unwrap();
    let sdf1 = std::fs::read_to_string(d1.join("report/shortlist.sdf")).unwrap();
    assert_eq!(sdf1.matches("$$$$").count(), short1.lines().count() - 1);
    // Again in the same store, and in a fresh one.
    succeed([
        std::ffi::OsStr::new("run"),
        w1.as_os_str(),
        "--no-bar".as_ref(),
    ]);
    succeed([
        std::ffi::OsStr::new("run"),
        w2.as_os_str(),
        "--no-bar".as_ref(),
    ]);
    let strip = |html: &str, d: &Path| html.replace(&d.display().to_string(), "DIR");
    for d in [&d1, &d2] {
        assert_eq!(
            std::fs::read_to_string(d.join("report/shortlist.csv")).unwrap(),
            short1
        );
        assert_eq!(
            std::fs::read_to_string(d.join("report/shortlist.json")).unwrap(),
            json1
        );
        assert_eq!(
            strip(
                &std::fs::read_to_string(d.join("report/report.html")).unwrap(),
                d
            ),
            strip(&html1, &d1)
        );
    }
    let c = Connection::open(d1.join("demo.sqlite")).unwrap();
    let n: i64 = c
        .query_row("SELECT count(*) FROM calibrations", [], |r| r.get(0))
        .unwrap();
    assert_eq!(n, 1, "the same fit twice is stored once");
    // The loop on the same store: `report` alone gives the run's shortlist; `suggest` picks
    // uncomputed candidates; its ids and the shortlist CSV both drive `export --for-qc`.
    let store = d1.join("demo.sqlite");
    succeed([
        std::ffi::OsStr::new("report"),
        store.as_os_str(),
        "--workflow".as_ref(),
        w1.as_os_str(),
        "--out".as_ref(),
        d1.join("again").as_os_str(),
    ]);
    assert_eq!(
        std::fs::read_to_string(d1.join("again/shortlist.csv")).unwrap(),
        short1
    );
    let ids = d1.join("next.txt");
    let out = succeed([
        std::ffi::OsStr::new("suggest"),
        store.as_os_str(),
        "--count".as_ref(),
        "3".as_ref(),
        "--write-ids".as_ref(),
        ids.as_os_str(),
        "--json".as_ref(),
    ]);
    let picks: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let picks = picks.as_array().unwrap();
    assert_eq!(picks.len(), 3);
    let computed: Vec<String> = {
        let mut st = c
            .prepare("SELECT DISTINCT candidate_id FROM qc_states WHERE match_status = 'matched'")
            .unwrap();
        st.query_map([], |r| r.get(0))
            .unwrap()
            .map(Result::unwrap)
            .collect()
    };
    assert_eq!(computed.len(), 16);
    for p in picks {
        assert!(!computed.contains(&p["candidate_id"].as_str().unwrap().to_string()));
        assert_eq!(p["calibrated"], true);
    }
    let tpl = d1.join("job.inp");
    std::fs::write(&tpl, "{{id}}\n{{natoms}}\n{{coords}}\n").unwrap();
    for (sel, n) in [
        (ids, 3),
        (d1.join("report/shortlist.csv"), short1.lines().count() - 1),
    ] {
        let jobs = d1.join(format!("jobs-{n}"));
        succeed([
            std::ffi::OsStr::new("export"),
            store.as_os_str(),
            "--for-qc".as_ref(),
            jobs.as_os_str(),
            "--template".as_ref(),
            tpl.as_os_str(),
            "--select".as_ref(),
            sel.as_os_str(),
        ]);
        let manifest = std::fs::read_to_string(jobs.join("manifest.csv")).unwrap();
        assert_eq!(manifest.lines().count(), n + 1, "{manifest}");
    }
}

#[test]
fn estimate_stage_stores_results_and_resumes() {
    let d = temp_dir("estimate");
    let wf = d.join("wf.toml");
    std::fs::write(
        &wf,
        format!(
            r#"[campaign]
name = "estimate-test"
store = "store.sqlite"
fragments = ["{frag}"]
stages = ["enumerate", "estimate"]
chunk_size = 2

[enumerate]
architectures = ["D-A"]
[enumerate.donors]
include = ["carbazol-9-yl", "diphenylamino"]
[enumerate.acceptors]
include = ["4-cyanophenyl", "pyridin-4-yl"]

[estimate]
twist_deg = 60.0
n_states = 4
"#,
            frag = repo().join("fragments").display()
        ),
    )
    .unwrap();
    let out = run(&wf, &[]);
    let log = String::from_utf8_lossy(&out.stderr);
    assert!(log.contains("4 candidates estimated, 0 failed"), "{log}");
    let c = Connection::open_with_flags(d.join("store.sqlite"), OpenFlags::SQLITE_OPEN_READ_ONLY)
        .unwrap();
    let rows: Vec<String> = {
        let mut st = c
            .prepare("SELECT data FROM results WHERE stage = 'estimate' ORDER BY candidate_id")
            .unwrap();
        st.query_map([], |r| r.get(0))
            .unwrap()
            .map(|x| x.unwrap())
            .collect()
    };
    assert_eq!(rows.len(), 4);
    for r in &rows {
        let v: serde_json::Value = serde_json::from_str(r).unwrap();
        let (s1, t1) = (v["s1_ev"].as_f64().unwrap(), v["t1_ev"].as_f64().unwrap());
        assert!(s1 > t1 && t1 > 0.0, "{r}");
        // Every link (between ring systems, and amine N–aryl bonds) sits at the fixed twist.
        for t in v["twists_deg"].as_array().unwrap() {
            assert_eq!(t.as_f64().unwrap(), 60.0);
        }
        assert_eq!(
            v["version"],
            lumisift::campaign::runner::ESTIMATE_RECORD_VERSION
        );
        // The validation outcome of the shipped parameters travels with every record, and the
        // raw (uncorrected) values are kept beside the corrected ones.
        let unvalidated: Vec<&str> = v["unvalidated"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_str().unwrap())
            .collect();
        let expected = lumisift::pi::params::PppParams::default_set()
            .validation
            .failed();
        assert_eq!(unvalidated, expected);
        assert!(v["raw_t1_ev"].as_f64().unwrap() < t1, "{r}");
        assert!(!v["singlets"].as_array().unwrap().is_empty());
    }
    // `export --estimates` flattens the records: one row per candidate, the π-tier numbers,
    // rates and colour filled in.
    let est_csv = d.join("estimates.csv");
    succeed([
        "export".as_ref(),
        d.join("store.sqlite").as_os_str(),
        "--estimates".as_ref(),
        est_csv.as_os_str(),
    ]);
    let mut rd = csv::Reader::from_path(&est_csv).unwrap();
    let header: Vec<String> = rd.headers().unwrap().iter().map(String::from).collect();
    assert_eq!(header, lumisift::report::export::ESTIMATE_COLUMNS);
    let recs: Vec<csv::StringRecord> = rd.records().map(|r| r.unwrap()).collect();
    assert_eq!(recs.len(), 4);
    for r in &recs {
        for col in ["s1_ev", "k_r_s1", "tau_prompt_s", "cie_x", "cie_y"] {
            let k = header.iter().position(|h| h == col).unwrap();
            let x: f64 = r[k]
                .parse()
                .unwrap_or_else(|_| panic!("{col} empty: {r:?}"));
            assert!(x.is_finite() && x > 0.0, "{col} = {x}");
        }
    }
    // `pairs`: each estimated candidate as a sensitiser (its stored band) against two terminal
    // emitters; the one absorbing where the sensitisers emit ranks above the far-red one, and
    // R₀ is the Förster radius of the stored band with the stored PL-yield bound.
    let blue_abs = d.join("absorbs-blue.csv");
    std::fs::write(
        &blue_abs,
        "330,50000
600,50000
",
    )
    .unwrap();
    let red_abs = d.join("absorbs-red.csv");
    std::fs::write(
        &red_abs,
        "750,50000
820,50000
",
    )
    .unwrap();
    let out = succeed([
        "pairs".as_ref(),
        d.join("store.sqlite").as_os_str(),
        blue_abs.as_os_str(),
        red_abs.as_os_str(),
        "--json".as_ref(),
    ]);
    let pairs: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let pairs = pairs.as_array().unwrap();
    assert_eq!(pairs.len(), 8);
    assert!(pairs[..4].iter().all(|p| p["emitter"] == "absorbs-blue"));
    assert!(
        pairs
            .windows(2)
            .all(|w| w[0]["r0_nm"].as_f64() >= w[1]["r0_nm"].as_f64())
    );
    let p0 = &pairs[0];
    let band = lumisift::colour::gaussian_band(
        p0["sensitiser_peak_ev"].as_f64().unwrap(),
        lumisift::photophysics::BandParams::default().fwhm_ev,
    )
    .unwrap();
    let eps = lumisift::colour::Spectrum::new(
        &[(330.0, 5e4), (600.0, 5e4)],
        lumisift::colour::Units::Energy,
    )
    .unwrap();
    let j = lumisift::forster::overlap_integral(&band, &eps).unwrap();
    let r0 = lumisift::forster::forster_radius_nm(
        j,
        p0["phi_d"].as_f64().unwrap(),
        lumisift::photophysics::RateParams::default().refractive_index,
        2.0 / 3.0,
    );
    assert!((p0["r0_nm"].as_f64().unwrap() - r0).abs() < 1e-9);
    // Terminal emitters built from π-tier singlets: the store's own bright candidates (never
    // paired with themselves) and a SMILES file (a bad line is reported with its number and
    // skipped; the good one is used).
    let smi = d.join("terminal.smi");
    std::fs::write(
        &smi,
        "# name after SMILES\nc1ccc2cc3ccccc3cc2c1 tricyclic\nC1CC( bad\n",
    )
    .unwrap();
    let out = succeed([
        "pairs".as_ref(),
        d.join("store.sqlite").as_os_str(),
        "--from-store".as_ref(),
        "--min-emitter-f".as_ref(),
        "0".as_ref(),
        "--emitter-smiles".as_ref(),
        smi.as_os_str(),
        "--top".as_ref(),
        "1000".as_ref(),
        "--json".as_ref(),
    ]);
    assert!(String::from_utf8_lossy(&out.stderr).contains("terminal.smi:3: skipped"));
    let pairs: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let pairs = pairs.as_array().unwrap();
    assert!(pairs.iter().any(|p| p["emitter"] == "tricyclic"));
    assert!(pairs.iter().any(|p| p["emitter"] != "tricyclic"));
    assert!(
        pairs
            .iter()
            .all(|p| p["emitter"] != p["candidate_id"] && p["r0_nm"].as_f64().unwrap() > 0.0)
    );
    // Running again does nothing new; other parameters add rows, never overwrite.
    let out = run(&wf, &[]);
    assert!(String::from_utf8_lossy(&out.stderr).contains("2 already done, 0 written"));
    let text = std::fs::read_to_string(&wf)
        .unwrap()
        .replace("twist_deg = 60.0", "twist_deg = 80.0");
    std::fs::write(&wf, text).unwrap();
    run(&wf, &[]);
    let n: i64 = c
        .query_row(
            "SELECT count(*) FROM results WHERE stage = 'estimate'",
            [],
            |r| r.get(0),
        )
        .unwrap();
    assert_eq!(n, 8, "a second parameter set adds rows");
}

#[test]
fn every_shipped_workflow_parses() {
    // Each campaign definition under workflows/ loads: known stages, known keys, valid values.
    for e in std::fs::read_dir(repo().join("workflows")).unwrap() {
        let p = e.unwrap().path();
        if p.extension().is_some_and(|x| x == "toml") {
            lumisift::campaign::Workflow::load(&p)
                .unwrap_or_else(|err| panic!("{}: {err}", p.display()));
        }
    }
}
