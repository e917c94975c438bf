//! The fast tier's reference data (π-tier results on seeded samples of the shipped library,
//! `tests/fixtures/fast_tier/pi_tier.csv`, made by `make_fixture.py` beside it) and its split:
//! the rows of sample `a` whose candidate id starts with a byte of 0x80 or above are the test
//! library; every other row is for fitting unless its molecule is in the test library, so one
//! molecule never sits on both sides. Shared by `examples/fit_fast_tier.rs` and the
//! integration test.

#![allow(dead_code)]

use lumisift::combine::Tuple;
use lumisift::fast::fit::Sample;
use std::sync::OnceLock;

use lumisift::fast::{CardSet, N_FEATURES, describe};
use lumisift::fragments::Library;
use lumisift::pi::params::PppParams;

/// The fixture, relative to the repository root (as recorded in the model file).
pub const FIXTURE: &str = "tests/fixtures/fast_tier/pi_tier.csv";
pub const SPLIT: &str = "test: sample a, candidate id first byte >= 0x80; fit: every other row whose molecule is not in the test";
/// Temperature and refractive index of the merit in the fit record (the workflow defaults).
pub const T_K: f64 = 300.0;
pub const N_HOST: f64 = 1.7;

/// The shipped library, loaded once per process.
pub fn library() -> &'static Library {
    static LIB: OnceLock<Library> = OnceLock::new();
    LIB.get_or_init(|| {
        lumisift::fragments::load_paths(&[concat!(env!("CARGO_MANIFEST_DIR"), "/fragments").into()])
            .expect("the shipped library loads")
    })
}

/// Cards of every fragment of the shipped library (about a second), computed once per process.
pub fn cards() -> &'static CardSet {
    static SET: OnceLock<CardSet> = OnceLock::new();
    SET.get_or_init(|| {
        CardSet::for_library(library(), &PppParams::default_set(), T_K).expect("probe scans")
    })
}

/// (fitting samples, test samples) from the fixture; failed π-tier rows are skipped.
pub fn samples(lib: &Library, set: &CardSet) -> (Vec<Sample>, Vec<Sample>) {
    let mut rdr =
        csv::Reader::from_path(std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(FIXTURE))
            .expect("fixture readable");
    let headers = rdr.headers().expect("fixture header").clone();
    let col = |name: &str| {
        headers
            .iter()
            .position(|h| h == name)
            .unwrap_or_else(|| panic!("fixture column {name}"))
    };
    let (sample_col, key, id, s1, dest, f, error) = (
        col("sample"),
        col("tuple_key"),
        col("candidate_id"),
        col("avg_s1_ev"),
        col("avg_delta_est_ev"),
        col("avg_f_s1"),
        col("error"),
    );
    let records: Vec<csv::StringRecord> = rdr.records().map(|r| r.expect("fixture row")).collect();
    let is_test = |r: &csv::StringRecord| {
        &r[sample_col] == "a" && u8::from_str_radix(&r[id][..2], 16).expect("hex id") >= 0x80
    };
    let test_ids: std::collections::HashSet<&str> = records
        .iter()
        .filter(|r| is_test(r))
        .map(|r| r.get(id).expect("id column"))
        .collect();
    let (mut fit, mut test) = (Vec::new(), Vec::new());
    for r in &records {
        if !r[error].is_empty() {
            continue;
        }
        let t = Tuple::parse_key(lib, &r[key]).expect("fixture tuple key");
        let mut x = [0.0; N_FEATURES];
        let Some(s) = describe(set, &t, &mut x) else {
            continue;
        };
        let num = |k: usize| r[k].parse::<f64>().expect("number");
        let sample = Sample {
            x,
            summary: s,
            s1_ev: num(s1),
            delta_est_ev: num(dest),
            f_s1: num(f),
        };
        if is_test(r) {
            test.push(sample);
        } else if !test_ids.contains(&r[id]) {
            fit.push(sample);
        }
    }
    (fit, test)
}
