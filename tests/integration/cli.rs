//! End-to-end tests of the real binary.

use std::io::Write;
use std::process::Stdio;

use crate::support_bin::bin;

/// Run the binary, require success, parse its stdout as JSON.
fn json_of(args: &[&str]) -> serde_json::Value {
    let out = bin().args(args).output().unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
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

#[test]
fn inspect_reports_units_torsion_and_states() {
    let v = json_of(&["inspect", "N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21", "--json"]);
    let est = &v["estimate"];
    // Two units: carbazole (donor, higher HOMO) and benzonitrile (acceptor, lower LUMO).
    let units = est["units"].as_array().unwrap();
    assert_eq!(units.len(), 2);
    let role = |n: usize| {
        units
            .iter()
            .find(|u| u["atoms"].as_array().unwrap().len() == n)
            .unwrap()["role"]
            .as_str()
            .unwrap()
            .to_string()
    };
    assert_eq!(role(13), "donor");
    assert_eq!(role(8), "acceptor");
    // One link, twisted (N-aryl carbazole: well away from planar and from perpendicular).
    let eq = est["links"][0]["equilibrium_deg"].as_f64().unwrap();
    assert!((40.0..=70.0).contains(&eq), "{eq}");
    let s1 = est["s1_ev"].as_f64().unwrap();
    let t1 = est["t1_ev"].as_f64().unwrap();
    assert!(s1 > t1 && (est["delta_est_ev"].as_f64().unwrap() - (s1 - t1)).abs() < 1e-12);
    assert!(v["caution"].as_str().unwrap().contains("not predictions"));
    assert!(
        v["estimate"]["raw_t1_ev"].as_f64().unwrap() < t1,
        "raw local triplets run low"
    );
    // A fixed twist of 90°: the pure CT states are dark.
    let out = bin()
        .args([
            "inspect",
            "N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21",
            "--twist",
            "90",
            "--json",
        ])
        .output()
        .unwrap();
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    for s in v["estimate"]["singlets"].as_array().unwrap() {
        if s["ct_number"].as_f64().unwrap() > 0.999 {
            assert!(s["osc_strength"].as_f64().unwrap() < 1e-10);
        }
    }
    // Human output and a clear error for an element outside the parameter set.
    let out = bin()
        .args(["inspect", "c1ccccc1-c1cc[te]c1"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("not parameterised: Te"));
    let out = bin()
        .args(["inspect", "c1ccccc1-c1ccccc1"])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("ΔEST") && text.contains("torsion-averaged"),
        "{text}"
    );
}

#[test]
fn inspect_checks_rate_and_band_settings_before_the_estimate() {
    // Te is outside the parameter set, so the estimate would fail: the settings error comes
    // first, naming the key.
    for (flag, value, key) in [
        ("--fwhm", "0", "fwhm_ev"),
        ("--stokes-shift", "-0.1", "stokes_shift_ev"),
        ("--refractive-index", "0.5", "refractive_index"),
        ("--knr-triplet", "-1", "k_nr_triplet"),
    ] {
        let out = bin()
            .args(["inspect", "c1ccccc1-c1cc[te]c1", &format!("{flag}={value}")])
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(2));
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(key) && !err.contains("Te"), "{err}");
    }
}

#[test]
fn inspect_writes_its_geometry_and_reads_it_back_with_xyz() {
    // Round trip: the equilibrium geometry written with --write-xyz and read with --xyz gives
    // the same states (twist measured from the coordinates instead of the torsion model).
    let smi = "N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21";
    let dir = std::env::temp_dir().join(format!("lumisift-xyz-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let (xyz, sdf) = (dir.join("eq.xyz"), dir.join("eq.sdf"));
    let a = json_of(&[
        "inspect",
        smi,
        "--json",
        "--write-xyz",
        xyz.to_str().unwrap(),
        "--write-sdf",
        sdf.to_str().unwrap(),
    ]);
    let text = std::fs::read_to_string(&xyz).unwrap();
    // 21 heavy atoms + 12 hydrogens (formula C19H12N2).
    assert_eq!(text.lines().next().unwrap().trim(), "33");
    let sdf_text = std::fs::read_to_string(&sdf).unwrap();
    assert!(sdf_text.contains("M  END") && sdf_text.contains(">  <S1_eV>"));
    let b = json_of(&["inspect", smi, "--json", "--xyz", xyz.to_str().unwrap()]);
    let (ea, eb) = (&a["estimate"], &b["estimate"]);
    let twist_a = ea["links"][0]["equilibrium_deg"].as_f64().unwrap();
    let twist_b = eb["links"][0]["equilibrium_deg"].as_f64().unwrap();
    assert!((twist_a - twist_b).abs() < 1e-3, "{twist_a} vs {twist_b}");
    for key in ["s1_ev", "t1_ev", "f_s1"] {
        let (x, y) = (ea[key].as_f64().unwrap(), eb[key].as_f64().unwrap());
        assert!((x - y).abs() < 1e-5, "{key}: {x} vs {y}");
    }
    // A file whose atoms are not in SMILES order is refused with the line named.
    let bad = temp_file(
        "bad-order.xyz",
        &text.replacen("\nN ", "\nQ ", 1).replacen("Q ", "O ", 1),
    );
    let out = bin()
        .args(["inspect", smi, "--xyz", bad.to_str().unwrap()])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("line 3") && err.contains("SMILES order"),
        "{err}"
    );
    let short = temp_file("short.xyz", "5\ncomment\nC 0 0 0\nC 1 0 0\n");
    let out = bin()
        .args(["inspect", smi, "--xyz", short.to_str().unwrap()])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("promises 5 atoms"), "{err}");
}

#[test]
fn colour_reports_chromaticity_of_a_band_and_of_a_spectrum_file() {
    // The band 2.70:0.35 eV is one of the colour-science fixture bands (x 0.1410, y 0.0651).
    let v = json_of(&[
        "colour",
        "--band",
        "2.70:0.35",
        "--target",
        "bt2020-blue",
        "--json",
    ]);
    assert!((v["colour"]["x"].as_f64().unwrap() - 0.1410).abs() < 1e-3);
    assert!((v["colour"]["y"].as_f64().unwrap() - 0.0651).abs() < 1e-3);
    let d = v["target"]["delta_u_prime_v_prime"].as_f64().unwrap();
    assert!(d > 0.0 && d < 0.1, "{d}");
    // A spectrum file with a header, read as photon counts (the default).
    let f = temp_file(
        "pl.csv",
        "# PL\nwavelength_nm,counts\n500,0.2\n510,1\n520,0.3\n",
    );
    let out = bin()
        .args(["colour", f.to_str().unwrap()])
        .output()
        .unwrap();
    assert!(out.status.success());
    assert!(String::from_utf8_lossy(&out.stdout).contains("peak 510 nm"));
    // A bad line is named.
    let bad = temp_file("bad.csv", "500,0.2\n510,none\n");
    let out = bin()
        .args(["colour", bad.to_str().unwrap()])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("line 2"));
}
