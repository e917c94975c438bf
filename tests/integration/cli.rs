//! End-to-end tests of the real binary.

use std::io::Write;
use std::process::{Command, Stdio};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_lumisift"))
}

fn temp_file(name: &str, text: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("lumisift-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

#[test]
fn molinfo_reports_bad_lines_and_carries_on() {
    let input = "# a comment\n\
                 c1ccccc1 benzene\n\
                 C1CC broken-ring\n\
                 \n\
                 N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21 cz-bn\n\
                 c1ccc2c(c1)[nH]c1ccccc12\n\
                 \x20 C(C)(C)(C)(C)C pentavalent\n";
    let path = temp_file("batch.smi", input);
    let out = bin().arg("molinfo").arg(&path).output().unwrap();
    assert_eq!(out.status.code(), Some(1), "some lines failed");
    let stdout = String::from_utf8(out.stdout).unwrap();
    let stderr = String::from_utf8(out.stderr).unwrap();
    let mut rdr = csv::Reader::from_reader(stdout.as_bytes());
    let headers = rdr.headers().unwrap().clone();
    assert_eq!(
        headers.iter().collect::<Vec<_>>(),
        [
            "id",
            "input",
            "canonical_smiles",
            "formula",
            "mol_weight",
            "monoisotopic_mass",
            "heavy_atoms",
            "rings",
            "aromatic_atoms"
        ]
    );
    let rows: Vec<csv::StringRecord> = rdr.records().map(|r| r.unwrap()).collect();
    assert_eq!(rows.len(), 3);
    assert_eq!(&rows[0][0], "benzene");
    assert_eq!(&rows[0][3], "C6H6");
    // benzene: 6 × 12.011 + 6 × 1.008 = 78.114 (IUPAC 2021 abridged weights)
    assert_eq!(&rows[0][4], "78.1140");
    assert_eq!(&rows[1][0], "cz-bn");
    assert_eq!(&rows[1][3], "C19H12N2");
    // No id column: the line number stands in.
    assert_eq!(&rows[2][0], "6");
    assert_eq!(&rows[2][3], "C12H9N");
    // Errors name file, line and column.
    let name = path.display().to_string();
    assert!(stderr.contains(&format!("{name}:3:2:")), "{stderr}");
    assert!(stderr.contains("never closed"), "{stderr}");
    assert!(stderr.contains(&format!("{name}:7:3:")), "{stderr}");
    assert!(stderr.contains("valence"), "{stderr}");
}

#[test]
fn molinfo_reads_stdin_and_exits_zero_when_all_lines_are_good() {
    let mut child = bin()
        .args(["molinfo", "-"])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    child
        .stdin
        .take()
        .unwrap()
        .write_all(b"C1=CC=NC=C1\tpyr\nn1ccccc1 pyr2\n")
        .unwrap();
    let out = child.wait_with_output().unwrap();
    assert!(out.status.success());
    let stdout = String::from_utf8(out.stdout).unwrap();
    let lines: Vec<&str> = stdout.lines().collect();
    assert_eq!(lines.len(), 3);
    let canon: Vec<&str> = lines[1..]
        .iter()
        .map(|l| l.split(',').nth(2).unwrap())
        .collect();
    assert_eq!(canon[0], canon[1]);
}

#[test]
fn molinfo_on_a_missing_file_says_so() {
    let out = bin()
        .args(["molinfo", "/nonexistent/molecules.smi"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let stderr = String::from_utf8(out.stderr).unwrap();
    assert!(stderr.contains("/nonexistent/molecules.smi"), "{stderr}");
}
