//! Tests of the quantum-chemistry output readers (`lumisift::qc`) on the real output files in
//! `../shared/qc-samples` (test data of cclib, BSD 3-Clause), edited variants of them (two jobs in
//! one file, triplets before singlets, CRLF), truncated copies and garbage, and the neutral
//! results table.
//!
//! Reference values: cclib 1.8.1 via reference.json (energies converted from cm⁻¹ with
//! 1 eV = 8065.543937 cm⁻¹, CODATA 2018). Tolerances as the samples' README suggests: 1e-3 eV,
//! 1e-3 in f, 2e-3 Å in coordinates.

use std::path::{Path, PathBuf};

use lumisift::qc::table::{ResultKind, read_table_str};
use lumisift::qc::{
    Calculation, Geometry, Program, QcError, ReadOptions, Severity, read_path, read_str,
    read_str_with,
};
use serde_json::Value;

const E_TOL: f64 = 1e-3;
const F_TOL: f64 = 1e-3;
const XYZ_TOL: f64 = 2e-3;

/// The samples folder, or `None` (with a message) when it is not there.
fn samples() -> Option<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../shared/qc-samples");
    if dir.join("reference.json").is_file() {
        Some(dir)
    } else {
        eprintln!("skipped: ../shared/qc-samples not present");
        None
    }
}

/// reference.json's per-file entries, sorted by file name.
fn reference(dir: &Path) -> Vec<(String, Value)> {
    let text = std::fs::read_to_string(dir.join("reference.json")).expect("reference.json");
    let v: Value = serde_json::from_str(&text).expect("reference.json is JSON");
    let mut files: Vec<(String, Value)> = v["files"]
        .as_object()
        .expect("`files` object")
        .iter()
        .map(|(k, v)| (k.clone(), v.clone()))
        .collect();
    files.sort_by(|a, b| a.0.cmp(&b.0));
    files
}

fn program_of(name: &str) -> Program {
    match name {
        "Gaussian" => Program::Gaussian,
        "ORCA" => Program::Orca,
        "Q-Chem" => Program::QChem,
        "NWChem" => Program::NwChem,
        "GAMESS" | "GAMESS (US)" => Program::Gamess,
        "Firefly" => Program::Firefly,
        "ADF" => Program::Adf,
        "DALTON" => Program::Dalton,
        "Jaguar" => Program::Jaguar,
        "Turbomole" => Program::Turbomole,
        other => panic!("program {other} not in the test's list"),
    }
}

/// The multiplicity the reference implies. cclib's label names it when the file gives it with
/// the state; where cclib gives only a symmetry label, the file states it elsewhere: GAMESS
/// prints the states under `SINGLET EXCITATIONS`, ADF says `Type of excitations =
/// SINGLET-SINGLET`. (Jaguar: cclib says `Singlet-A`; the reader infers singlets from the
/// closed-shell ground state, with an Info diagnostic.)
fn expected_multiplicity(file: &str, label: &str) -> u8 {
    let l = label.to_ascii_lowercase();
    if l.contains("singlet") {
        1
    } else if l.contains("triplet") {
        3
    } else {
        match file {
            "GAMESS/dvb_td.out" | "ADF/dvb_td.adfout" => 1,
            _ => panic!("{file}: no multiplicity known for label {label}"),
        }
    }
}

/// Compare a calculation's states with the reference as multisets: every reference state is
/// matched to one unused state with the same multiplicity, energy within 1e-3 eV and oscillator
/// strength within 1e-3 (states come in file order, which is not cclib's order for ORCA).
fn check_states(file: &str, calc: &Calculation, reference: &Value) {
    let refs = reference["excited_states"]
        .as_array()
        .expect("excited_states");
    assert_eq!(calc.states.len(), refs.len(), "{file}: number of states");
    for (k, s) in calc.states.iter().enumerate() {
        assert_eq!(s.index, k + 1, "{file}: states numbered in file order");
    }
    let mut used = vec![false; calc.states.len()];
    for r in refs {
        let e = r["energy_eV"].as_f64().expect("energy_eV");
        let f = r["osc_strength"].as_f64();
        let m = expected_multiplicity(file, r["label_as_cclib_gives_it"].as_str().unwrap_or(""));
        let hit = calc.states.iter().enumerate().position(|(k, s)| {
            !used[k]
                && (s.energy_ev - e).abs() < E_TOL
                && s.multiplicity == Some(m)
                && match (f, s.osc_strength) {
                    (Some(f), Some(g)) => (f - g).abs() < F_TOL,
                    (None, _) => true,
                    (Some(_), None) => false,
                }
        });
        match hit {
            Some(k) => used[k] = true,
            None => panic!(
                "{file}: reference state {r} not found among {:#?}",
                calc.states
            ),
        }
    }
}

fn check_geometry(file: &str, g: &Geometry, elements: &Value, coords: &Value) {
    let elements: Vec<&str> = elements
        .as_array()
        .expect("elements")
        .iter()
        .map(|e| e.as_str().expect("symbol"))
        .collect();
    assert_eq!(g.natom(), elements.len(), "{file}: natom");
    assert_eq!(g.elements, elements, "{file}: elements");
    let coords = coords.as_array().expect("final_geometry_angstrom");
    assert_eq!(coords.len(), g.natom(), "{file}: number of coordinates");
    for (a, (ours, r)) in g.coords_angstrom.iter().zip(coords).enumerate() {
        for k in 0..3 {
            let x = r[k].as_f64().expect("coordinate");
            assert!(
                (ours[k] - x).abs() < XYZ_TOL,
                "{file}: atom {} coordinate {k}: {} vs reference {x}",
                a + 1,
                ours[k]
            );
        }
    }
}

/// The reference geometry of a file. cclib 1.8.1 reads none from DALTON/dvb_td.out; its echoed
/// .mol input is the same divinylbenzene geometry (same atom order) as ORCA/dvb_td.out's, so
/// that file's reference stands in.
fn reference_geometry<'a>(
    file: &str,
    entry: &'a Value,
    all: &'a [(String, Value)],
) -> Option<&'a Value> {
    if entry["final_geometry_angstrom"].is_null() {
        if file == "DALTON/dvb_td.out" {
            return all
                .iter()
                .find(|(f, _)| f == "ORCA/dvb_td.out")
                .map(|(_, v)| v);
        }
        return None;
    }
    Some(entry)
}

#[test]
fn every_sample_matches_reference() {
    let Some(dir) = samples() else { return };
    let refs = reference(&dir);
    assert!(refs.len() >= 13, "all sample entries present");
    for (file, entry) in &refs {
        let path = dir.join(file);
        let expected_program = program_of(entry["program"].as_str().expect("program"));
        let negative = entry["negative_case"].as_bool().expect("negative_case");
        match read_path(&path) {
            Ok((r, diags)) => {
                assert!(!negative, "{file}: negative case read as a success");
                assert_eq!(r.program, expected_program, "{file}: program");
                assert!(
                    !r.partial,
                    "{file}: complete file flagged partial: {diags:?}"
                );
                assert!(r.version.is_some(), "{file}: version");
                assert!(r.method.is_some(), "{file}: method");
                assert!(
                    diags.iter().all(|d| d.severity != Severity::Error),
                    "{file}: {diags:?}"
                );
                let calc = r.primary().expect("a calculation with states");
                check_states(file, calc, entry);
                let g = calc.geometry.as_ref().expect("geometry");
                let rg = reference_geometry(file, entry, &refs).expect("reference geometry");
                check_geometry(file, g, &entry["elements"], &rg["final_geometry_angstrom"]);
            }
            Err(QcError::NoExcitedStates {
                program,
                geometry,
                file: name,
                ..
            }) => {
                assert!(negative, "{file}: no excited states read");
                assert_eq!(program, expected_program, "{file}: program");
                assert!(name.ends_with(file.as_str()), "error names the file");
                let g = geometry.expect("the geometry is still available");
                check_geometry(
                    file,
                    &g,
                    &entry["elements"],
                    &entry["final_geometry_angstrom"],
                );
            }
            Err(e) => panic!("{file}: {e}"),
        }
    }
}

#[test]
fn no_excited_states_error_says_so() {
    let Some(dir) = samples() else { return };
    for file in ["Gaussian/dvb_gopt.out", "ORCA/dvb_sp.out"] {
        let err = read_path(dir.join(file)).expect_err("negative case");
        let msg = err.to_string();
        assert!(msg.contains("no excited-state results"), "{msg}");
        assert!(msg.contains(file), "{msg}");
    }
}

fn read_text(dir: &Path, file: &str) -> String {
    std::fs::read_to_string(dir.join(file)).expect("sample readable")
}

fn positives(refs: &[(String, Value)]) -> Vec<&(String, Value)> {
    refs.iter()
        .filter(|(_, e)| !e["negative_case"].as_bool().unwrap_or(true))
        .collect()
}

#[test]
fn two_jobs_in_one_file() {
    let Some(dir) = samples() else { return };
    let refs = reference(&dir);
    // Each positive sample twice in a row: two calculations, each with the reference states.
    for (file, entry) in positives(&refs) {
        let text = read_text(&dir, file);
        let doubled = format!("{text}{text}");
        let (r, _) = read_str(&doubled, file).unwrap_or_else(|e| panic!("{e}"));
        let with_states: Vec<&Calculation> = r
            .calculations
            .iter()
            .filter(|c| !c.states.is_empty())
            .collect();
        assert_eq!(with_states.len(), 2, "{file}: two calculations with states");
        for c in with_states {
            check_states(file, c, entry);
        }
    }
    // Two different Gaussian jobs: divinylbenzene then CO, each with its own states and geometry.
    let a = "Gaussian/dvb_td.out";
    let b = "Gaussian/CO_TD_delta.log";
    let text = format!("{}{}", read_text(&dir, a), read_text(&dir, b));
    let (r, _) = read_str(&text, "joined").expect("joined jobs");
    assert_eq!(r.calculations.len(), 2);
    let ea = &refs.iter().find(|(f, _)| f == a).expect(a).1;
    let eb = &refs.iter().find(|(f, _)| f == b).expect(b).1;
    check_states(a, &r.calculations[0], ea);
    check_states(b, &r.calculations[1], eb);
    assert_eq!(
        r.calculations[0].geometry.as_ref().map(|g| g.natom()),
        Some(20)
    );
    assert_eq!(
        r.calculations[1].geometry.as_ref().map(|g| g.natom()),
        Some(2)
    );
    assert_eq!(r.primary(), Some(&r.calculations[1]));
}

#[test]
fn orca_triplets_before_singlets() {
    let Some(dir) = samples() else { return };
    let refs = reference(&dir);
    let file = "ORCA/dvb_td.out";
    let text = read_text(&dir, file);
    let lines: Vec<&str> = text.lines().collect();
    let find = |key: &str| {
        lines
            .iter()
            .position(|l| l.contains(key))
            .unwrap_or_else(|| panic!("{key} in {file}"))
    };
    // Each block starts at the dashed line above its title.
    let s = find("EXCITED STATES (SINGLETS)") - 1;
    let t = find("EXCITED STATES (TRIPLETS)") - 1;
    let end = find("TD-DFT/TDA-EXCITATION SPECTRA") - 1;
    assert!(s < t && t < end);
    let mut moved: Vec<&str> = lines[..s].to_vec();
    moved.extend_from_slice(&lines[t..end]);
    moved.extend_from_slice(&lines[s..t]);
    moved.extend_from_slice(&lines[end..]);
    let (r, _) = read_str(&moved.join("\n"), file).expect("moved blocks");
    let calc = r.primary().expect("states");
    assert_eq!(
        calc.states[0].multiplicity,
        Some(3),
        "triplets now first in file order"
    );
    let entry = &refs.iter().find(|(f, _)| f == file).expect(file).1;
    check_states(file, calc, entry);
}

#[test]
fn crlf_line_endings_read_the_same() {
    let Some(dir) = samples() else { return };
    let refs = reference(&dir);
    for (file, _) in &refs {
        let text = read_text(&dir, file);
        let crlf = text.replace('\n', "\r\n");
        match (read_str(&text, file), read_str(&crlf, file)) {
            (Ok((a, _)), Ok((b, _))) => assert_eq!(a, b, "{file}: CRLF changes the result"),
            (
                Err(QcError::NoExcitedStates { geometry: ga, .. }),
                Err(QcError::NoExcitedStates { geometry: gb, .. }),
            ) => assert_eq!(ga, gb, "{file}"),
            (a, b) => panic!("{file}: LF {:?} vs CRLF {:?}", a.is_ok(), b.is_ok()),
        }
    }
}

/// SplitMix64: a small seeded generator, enough to pick cut points and bytes reproducibly.
struct SplitMix(u64);

impl SplitMix {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }
}

#[test]
fn truncated_copies_never_panic() {
    let Some(dir) = samples() else { return };
    let refs = reference(&dir);
    let mut rng = SplitMix(0x6C75_6D69);
    for (file, _) in &refs {
        let text = read_text(&dir, file);
        for _ in 0..40 {
            let mut cut = rng.below(text.len());
            while !text.is_char_boundary(cut) {
                cut -= 1;
            }
            let part = &text[..cut];
            match read_str(part, file) {
                Ok((r, diags)) => {
                    // Every sample's normal-termination line is in its last 10 %.
                    if cut < text.len() * 9 / 10 {
                        assert!(r.partial, "{file} cut at {cut}: not flagged partial");
                    }
                    if r.partial {
                        assert!(
                            diags
                                .iter()
                                .any(|d| d.severity == Severity::Warning && d.line.is_some()),
                            "{file} cut at {cut}: partial without a warning"
                        );
                    }
                    assert!(r.calculations.iter().any(|c| !c.states.is_empty()));
                }
                Err(
                    QcError::NoExcitedStates { .. }
                    | QcError::UnknownFormat { .. }
                    | QcError::Malformed { .. },
                ) => {}
                Err(e) => panic!("{file} cut at {cut}: unexpected error {e}"),
            }
        }
    }
}

#[test]
fn garbage_never_panics() {
    let Some(dir) = samples() else { return };
    let refs = reference(&dir);
    let mut rng = SplitMix(0x7164_6376);
    // Random bytes: not recognised.
    for n in [0, 1, 100, 10_000] {
        let bytes: Vec<u8> = (0..n).map(|_| rng.next() as u8).collect();
        let text = String::from_utf8_lossy(&bytes);
        assert!(read_str(&text, "garbage").is_err());
    }
    // A real file's lines shuffled, duplicated and dropped, interleaved with random bytes: the
    // banner is usually kept, so the program's reader runs on broken structure.
    for (file, _) in &refs {
        let text = read_text(&dir, file);
        let lines: Vec<&str> = text.lines().collect();
        for _ in 0..10 {
            let mut out = String::new();
            for _ in 0..lines.len() {
                let k = rng.below(lines.len());
                let start = k.saturating_sub(rng.below(3));
                for l in &lines[start..(k + 1).min(lines.len())] {
                    out.push_str(l);
                    out.push('\n');
                }
                if rng.below(50) == 0 {
                    let bytes: Vec<u8> = (0..rng.below(80)).map(|_| rng.next() as u8).collect();
                    out.push_str(&String::from_utf8_lossy(&bytes));
                    out.push('\n');
                }
            }
            let _ = read_str(&out, file);
        }
    }
}

#[test]
fn unknown_format_is_a_clear_error() {
    let err = read_str("just some text\nwith two lines\n", "notes.txt").expect_err("unknown");
    assert!(matches!(err, QcError::UnknownFormat { .. }));
    assert!(err.to_string().contains("notes.txt"));
    assert!(read_str("", "empty.out").is_err());
}

#[test]
fn strict_mode_turns_bad_state_lines_into_errors() {
    let text =
        " Entering Gaussian System, Link 0=g16\n Excited State   1:      Singlet-BU     five eV\n";
    let lenient = read_str(text, "bad.log").expect_err("no state could be read");
    assert!(
        matches!(lenient, QcError::NoExcitedStates { .. }),
        "{lenient}"
    );
    let err = read_str_with(text, "bad.log", ReadOptions { strict: true }).expect_err("strict");
    match err {
        QcError::Malformed { line, .. } => assert_eq!(line, 2),
        e => panic!("{e}"),
    }
}

#[test]
fn results_table_reports_bad_rows_and_keeps_good_ones() {
    let csv = "\
candidate,kind,method,conditions,state_label,multiplicity,energy_ev,osc_strength
N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21,vertical_absorption,TD-B3LYP/def2-SVP,gas,S1,1,3.41,0.12
N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21,vertical_absorption,TD-B3LYP/def2-SVP,gas,T1,triplet,3.02,
N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21,measured_delta_est_77k,onsets,\"toluene, 77 K\",,,0.31,
cand-4,sideways_emission,?,,S1,1,2.9,0.1
cand-5,measured_pl_peak,PL,film,,,not-a-number,
cand-6,measured_pl_peak,PL,film,,,2.75,
";
    let (rows, diags) = read_table_str(csv, "results.csv").expect("table");
    assert_eq!(rows.len(), 4);
    assert_eq!(rows[0].kind, ResultKind::VerticalAbsorption);
    assert_eq!(rows[0].osc_strength, Some(0.12));
    assert_eq!(rows[1].multiplicity, Some(3));
    assert_eq!(rows[1].osc_strength, None);
    assert_eq!(rows[2].kind, ResultKind::MeasuredDeltaEst77k);
    assert_eq!(rows[2].conditions.as_deref(), Some("toluene, 77 K"));
    assert_eq!(rows[3].line, 7);
    let errors: Vec<_> = diags
        .iter()
        .filter(|d| d.severity == Severity::Error)
        .collect();
    assert_eq!(errors.len(), 2, "{diags:?}");
    assert_eq!(errors[0].line, Some(5));
    assert!(errors[0].message.contains("sideways_emission"));
    assert_eq!(errors[1].line, Some(6));
    // A header without the required columns is an error naming the line.
    let err = read_table_str("name,energy\nx,1\n", "t.csv").expect_err("no header");
    assert!(matches!(err, QcError::Malformed { line: 1, .. }), "{err}");
}

#[test]
fn results_serialise_to_json() {
    let Some(dir) = samples() else { return };
    let (r, d) = read_path(dir.join("Gaussian/dvb_td.out")).expect("reads");
    let json = serde_json::to_string(&(r, d)).expect("serialisable");
    assert!(json.contains("\"energy_ev\""));
}

/// Notations the samples do not show, written as the programs print them: each snippet read
/// with the expected spin, energy and oscillator strength.
fn check_snippet(text: &str, expected: &[(Option<u8>, f64, Option<f64>)]) {
    let (r, diags) = read_str(text, "snippet").unwrap_or_else(|e| panic!("{e}"));
    let calc = r.primary().expect("states");
    let got: Vec<(Option<u8>, f64, Option<f64>)> = calc
        .states
        .iter()
        .map(|s| (s.multiplicity, s.energy_ev, s.osc_strength))
        .collect();
    assert_eq!(got.len(), expected.len(), "{got:?} {diags:?}");
    for (g, e) in got.iter().zip(expected) {
        assert_eq!(g.0, e.0, "{got:?}");
        assert!((g.1 - e.1).abs() < E_TOL, "{got:?}");
        match (g.2, e.2) {
            (Some(a), Some(b)) => assert!((a - b).abs() < F_TOL, "{got:?}"),
            (a, b) => assert_eq!(a, b, "{got:?}"),
        }
    }
}

#[test]
fn gaussian_unrestricted_spin_labels() {
    check_snippet(
        " Entering Gaussian System, Link 0=g16
 Excited State   1:      3.000-A      2.1000 eV  590.40 nm  f=0.0000  <S**2>=2.000
 Excited State   2:      2.021-A      2.5000 eV  495.94 nm  f=0.0123  <S**2>=0.771
 Excited State   3:      Singlet-A      3.0000 eV  413.28 nm  f=0.1000  <S**2>=0.000
 Excited State   4:      2.452-A      3.5000 eV  354.24 nm  f=0.0200  <S**2>=1.253
 Normal termination of Gaussian 16
",
        &[
            (Some(3), 2.1, Some(0.0)),
            (Some(2), 2.5, Some(0.0123)),
            (Some(1), 3.0, Some(0.1)),
            (None, 3.5, Some(0.02)),
        ],
    );
}

#[test]
fn orca6_spectrum_rows_and_unrestricted_blocks() {
    check_snippet(
        "                                 * O   R   C   A *
TD-DFT EXCITED STATES (SINGLETS)
STATE  1:  E=   0.100000 au      2.721 eV    21947.5 cm**-1 <S**2> =   0.000000 Mult 1
TD-DFT EXCITED STATES (TRIPLETS)
STATE  1:  E=   0.080000 au      2.177 eV    17558.0 cm**-1 <S**2> =   2.000000 Mult 3
---------------------------------------------------------------------------------------------
                     ABSORPTION SPECTRUM VIA TRANSITION ELECTRIC DIPOLE MOMENTS
---------------------------------------------------------------------------------------------
     Transition      Energy     Energy  Wavelength fosc(D2)      D2        DX        DY        DZ
                      (eV)      (cm-1)    (nm)                   (au**2)    (au)      (au)      (au)
---------------------------------------------------------------------------------------------
  0-1A  ->  1-1A    2.721139   21947.5   455.6   0.123456789   1.00000   1.00000   0.00000   0.00000

                             ****ORCA TERMINATED NORMALLY****
",
        &[
            (Some(1), 21947.5 / 8065.543937, Some(0.123457)),
            (Some(3), 17558.0 / 8065.543937, Some(0.0)),
        ],
    );
    // Unrestricted (doublet) reference: no spin in the title, ⟨S²⟩ gives it.
    check_snippet(
        "                                 * O   R   C   A *
TD-DFT/TDA EXCITED STATES
STATE  1:  E=   0.100000 au      2.721 eV    21947.5 cm**-1 <S**2> =   0.760000
STATE  2:  E=   0.110000 au      2.993 eV    24142.2 cm**-1 <S**2> =   1.400000
",
        &[
            (Some(2), 21947.5 / 8065.543937, None),
            (None, 24142.2 / 8065.543937, None),
        ],
    );
}

#[test]
fn qchem_unrestricted_and_rpa_after_tda() {
    // With RPA requested Q-Chem prints the TDA states first, then the RPA ones: RPA wins.
    check_snippet(
        "                  Welcome to Q-Chem
         TDDFT/TDA Excitation Energies
 Excited state   1: excitation energy (eV) =    3.0000
    <S**2>     :  0.7713
    Strength   :     0.0100000000

         TDDFT Excitation Energies
 Excited state   1: excitation energy (eV) =    2.9000
    <S**2>     :  0.7713
    Strength   :     0.0200000000

 Excited state   2: excitation energy (eV) =    3.5000
    Multiplicity: Triplet
    Strength   :     0.0000000000

        *  Thank you very much for using Q-Chem.  Have a nice day.  *
",
        &[(Some(2), 2.9, Some(0.02)), (Some(3), 3.5, Some(0.0))],
    );
}

#[test]
fn nwchem_older_and_unrestricted_root_lines() {
    check_snippet(
        "             Northwest Computational Chemistry Package (NWChem) 6.8
  Root   1 singlet b2u             0.294221372 a.u. (    8.0062 eV)
     Oscillator Strength                           0.1234
  Root   1 triplet b1u             0.200000000 a.u. (    5.4423 eV)
     Oscillator Strength                           0.0000
  Root   2         a               0.100000000 a.u.                2.7211 eV
     Total Oscillator Strength                     0.0500
 Total times  cpu:        1.0s     wall:        1.1s
",
        &[
            (Some(1), 8.0062, Some(0.1234)),
            (Some(3), 5.4423, Some(0.0)),
            (None, 2.7211, Some(0.05)),
        ],
    );
}

#[test]
fn turbomole_triplets() {
    check_snippet(
        "       escf (host) : TURBOMOLE rev. V7.5 compiled
 RPA TRIPLET-EXCITATION-CALCULATION
                         1 triplet a excitation
 Excitation energy / eV:                  5.500000000000000
                         2 triplet a excitation
 Excitation energy / eV:                  6.100000000000000
   ****  escf : all done  ****
",
        &[(Some(3), 5.5, None), (Some(3), 6.1, None)],
    );
}
