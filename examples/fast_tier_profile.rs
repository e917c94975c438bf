//! The fast tier's per-tuple work, one loop per path, for instruction counts that a noisy
//! machine cannot blur (wall time per loop is printed too, as noisy as the machine):
//!
//!     cargo build --release --example fast_tier_profile
//!     valgrind --tool=callgrind --toggle-collect='fast_tier_profile::loop_score' \
//!         target/release/examples/fast_tier_profile score
//!
//! Modes: `descriptors` (loop `loop_descriptors`), `score` (`loop_score`, the shipped screen
//! score through the screener, the cascade's path), `ridge` (`loop_score_without_trees`, the
//! same without the trees), `reference` (`loop_score_from_descriptors`, the score through
//! the descriptors, what the screener is tested against); none runs all four. Instructions
//! per tuple = the "Collected" count / the tuple count printed. The tuples are the benchmark's
//! (`benches/fast.rs`): blocks of 1,000 consecutive admitted tuples, one block in every
//! 7,000, so every architecture is represented and each block is the stream the screen meets;
//! `every7` takes every 7th tuple instead (no two consecutive), `runs` ten runs of 10,000
//! consecutive tuples (closer to a whole screen's stream), `whole` the whole enumeration
//! (2.43·10^6 tuples: the stream a screen of the whole library meets).
use std::hint::black_box;

use lumisift::combine::Tuple;
use lumisift::fast::{BoundModel, CardSet, Describer, FastModel, N_FEATURES, Screener};
use lumisift::pi::params::PppParams;

#[path = "../benches/support/fast_tuples.rs"]
mod fast_tuples;

#[inline(never)]
fn loop_descriptors(set: &CardSet, tuples: &[Tuple]) -> f64 {
    let mut s = 0.0;
    let mut d = Describer::new(set);
    for t in tuples {
        let mut x = [0.0; N_FEATURES];
        if d.describe(black_box(t), &mut x).is_some() {
            s += black_box(&x)[19];
        }
    }
    s
}

#[inline(always)]
fn scores(set: &CardSet, model: &BoundModel, tuples: &[Tuple]) -> f64 {
    let mut s = 0.0;
    let mut screener = Screener::new(model, set);
    for t in tuples {
        if let Some((m, _)) = screener.score(black_box(t)) {
            s += m;
        }
    }
    s
}

#[inline(never)]
fn loop_score_from_descriptors(set: &CardSet, model: &BoundModel, tuples: &[Tuple]) -> f64 {
    let mut s = 0.0;
    let mut d = Describer::new(set);
    for t in tuples {
        if let Some((m, _)) = model.score_stream(&mut d, black_box(t)) {
            s += m;
        }
    }
    s
}

#[inline(never)]
fn loop_score(set: &CardSet, model: &BoundModel, tuples: &[Tuple]) -> f64 {
    scores(set, model, tuples)
}

#[inline(never)]
fn loop_score_without_trees(set: &CardSet, model: &BoundModel, tuples: &[Tuple]) -> f64 {
    // black_box: a body of its own (identical functions may be merged into one symbol).
    scores(set, black_box(model), tuples)
}

fn main() {
    let lib = lumisift::fragments::load_paths(&["fragments".into()]).expect("fragments");
    let set = CardSet::for_library(&lib, &PppParams::default_set(), 300.0).expect("cards");
    let bound = FastModel::default_model().bind(&set, 1.7, 300.0);
    let mut ridge_only = bound.clone();
    ridge_only.drop_trees();
    let arg = std::env::args().nth(1).unwrap_or_default();
    let sample = if std::env::args().any(|a| a == "every7") {
        fast_tuples::Sample::Every7
    } else if std::env::args().any(|a| a == "runs") {
        fast_tuples::Sample::Runs
    } else if std::env::args().any(|a| a == "whole") {
        fast_tuples::Sample::Whole
    } else {
        fast_tuples::Sample::Blocks
    };
    let tuples = fast_tuples::tuples(&lib, sample);
    println!("{} tuples", tuples.len());
    let time = |name: &str, f: &dyn Fn() -> f64| {
        let t0 = std::time::Instant::now();
        let v = f();
        let dt = t0.elapsed().as_secs_f64();
        println!(
            "{name}: {:.1} ns per tuple ({v:.3})",
            dt * 1e9 / tuples.len() as f64
        );
    };
    if arg.is_empty() || arg == "descriptors" {
        time("descriptors", &|| loop_descriptors(&set, &tuples));
    }
    if arg.is_empty() || arg == "score" {
        time("score", &|| loop_score(&set, &bound, &tuples));
    }
    if arg.is_empty() || arg == "reference" {
        time("score from the descriptors", &|| {
            loop_score_from_descriptors(&set, &bound, &tuples)
        });
    }
    if arg.is_empty() || arg == "ridge" {
        time("score without trees", &|| {
            loop_score_without_trees(&set, &ridge_only, &tuples)
        });
    }
}
