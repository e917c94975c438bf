//! The fast tier's reference data (π-tier results on a seeded sample of the shipped library,
//! `tests/fixtures/fast_tier/pi_tier.csv`, made by `make_fixture.py` beside it) and its split:
//! a row whose candidate id starts with a byte below 0x80 is for fitting, the rest for testing,
//! so one molecule never sits on both sides. Shared by `examples/fit_fast_tier.rs` and the
//! integration test.

#![allow(dead_code)]

use lumisift::combine::Tuple;
use lumisift::fast::fit::Sample;
use lumisift::fast::{CardSet, N_FEATURES, describe, fragment_card, reference_profile};
use lumisift::fragments::Library;
use lumisift::pi::params::PppParams;
use lumisift::pi::torsion::TorsionParams;

pub const FIXTURE: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/tests/fixtures/fast_tier/pi_tier.csv"
);
pub const SPLIT: &str = "candidate id first byte < 0x80: fit; otherwise: test";
/// Temperature and refractive index of the merit in the fit record (the workflow defaults).
pub const T_K: f64 = 300.0;
pub const N_HOST: f64 = 1.7;

pub fn library() -> Library {
    lumisift::fragments::load_paths(&[concat!(env!("CARGO_MANIFEST_DIR"), "/fragments").into()])
        .expect("the shipped library loads")
}

/// Cards of every fragment (sequential; about a second).
pub fn cards(lib: &Library) -> CardSet {
    let ppp = PppParams::default_set();
    let cards = lib
        .fragments
        .iter()
        .map(|f| fragment_card(f, &ppp).expect("card"))
        .collect();
    let tp = TorsionParams {
        conjugation_scale: ppp.torsion.conjugation_scale,
        steric_scale: ppp.torsion.steric_scale,
        temperature_k: T_K,
    };
    CardSet::new(cards, &reference_profile(&ppp).expect("probe scans"), &tp)
}

/// (fitting samples, test samples) from the fixture; failed π-tier rows are skipped.
pub fn samples(lib: &Library, set: &CardSet) -> (Vec<Sample>, Vec<Sample>) {
    let mut rdr = csv::Reader::from_path(FIXTURE).expect("fixture readable");
    let (mut fit, mut test) = (Vec::new(), Vec::new());
    for r in rdr.records() {
        let r = r.expect("fixture row");
        if !r[10].is_empty() {
            continue;
        }
        let t = Tuple::parse_key(lib, &r[0]).expect("fixture tuple key");
        let mut x = [0.0; N_FEATURES];
        let Some(s) = describe(set, &t, &mut x) else {
            continue;
        };
        let num = |k: usize| r[k].parse::<f64>().expect("number");
        let sample = Sample {
            x,
            donor: s.donor,
            acceptor: s.acceptor,
            bridge: s.bridge,
            s1_ev: num(2),
            delta_est_ev: num(4),
            f_s1: num(5),
        };
        if u8::from_str_radix(&r[1][..2], 16).expect("hex id") < 0x80 {
            fit.push(sample);
        } else {
            test.push(sample);
        }
    }
    (fit, test)
}
