//! How often the screener makes an arm record over a whole enumeration of the shipped library
//! (all architectures, Dn-A up to four mixed donors, no weight limit: the benchmark's
//! enumeration): tuples, runs of one core, records made, tuples the trees refine (ridge part at
//! or above the gate) and how many of those find their early trees' sum; and the rate of
//! scoring the whole stream (one core, the tuples enumerated into memory first, about 0.4 GB;
//! best of three, with the trees behind their gate, refining every tuple, and without).
//!
//!     cargo run --release --example screen_records
use std::ops::ControlFlow;

use lumisift::combine::{DnAMode, EnumerateParams, Enumerator, TupleEvent};
use lumisift::fast::{CardSet, FastModel, Screener};
use lumisift::model::Architecture;
use lumisift::pi::params::PppParams;

fn main() {
    let lib = lumisift::fragments::load_paths(&["fragments".into()]).expect("fragments");
    let set = CardSet::for_library(&lib, &PppParams::default_set(), 300.0).expect("cards");
    let bound = FastModel::default_model().bind(&set, 1.7, 300.0);
    let params = EnumerateParams {
        architectures: Architecture::ALL.to_vec(),
        dn_a_max: 4,
        dn_a_mode: DnAMode::Mixed,
        ..EnumerateParams::default()
    };
    let en = Enumerator::new(&lib, &params).expect("enumerator");
    let mut all = Vec::new();
    en.for_each(|e| {
        if let TupleEvent::Admitted(t) = e {
            all.push(t);
        }
        ControlFlow::Continue(())
    });
    let mut screener = Screener::new(&bound, &set);
    let (mut runs, mut scored) = (0u64, 0u64);
    let mut key = None;
    for t in &all {
        let run = (t.core, lumisift::fast::features::core_is_donor(&set, t));
        if key != Some(run) {
            key = Some(run);
            runs += 1;
        }
        scored += u64::from(screener.score(t).is_some());
    }
    let tuples = all.len() as u64;
    println!(
        "{tuples} tuples ({scored} with a donor–acceptor path), {runs} runs of one core and side, {} arm records made ({:.2} % of tuples)",
        screener.records_made(),
        100.0 * screener.records_made() as f64 / tuples as f64,
    );
    let (hits, misses) = screener.memo_counts();
    println!(
        "early trees: summed for {misses} tuples, found for {hits} ({:.1} % found)",
        100.0 * hits as f64 / (hits + misses).max(1) as f64
    );
    println!(
        "trees summed for {} tuples ({:.1} %; the rest below the gate {:?})",
        screener.refined().unwrap_or(0),
        100.0 * screener.refined().unwrap_or(0) as f64 / scored.max(1) as f64,
        bound.gate().0
    );
    let mut ridge = bound.clone();
    ridge.drop_trees();
    let mut ungated = bound.clone();
    ungated.refine_all();
    for (name, model) in [
        ("with the trees", &bound),
        ("with the trees refining every tuple", &ungated),
        ("without the trees", &ridge),
    ] {
        let best = (0..3)
            .map(|_| {
                let t0 = std::time::Instant::now();
                let mut s = 0.0;
                let mut screener = Screener::new(model, &set);
                for t in &all {
                    if let Some((m, _)) = screener.score(std::hint::black_box(t)) {
                        s += m;
                    }
                }
                std::hint::black_box(s);
                t0.elapsed().as_secs_f64()
            })
            .fold(f64::INFINITY, f64::min);
        println!(
            "whole stream {name}: {:.3} s, {:.1} ns a tuple, {:.2} M tuples/s",
            best,
            best * 1e9 / tuples as f64,
            tuples as f64 / best / 1e6
        );
    }
}
