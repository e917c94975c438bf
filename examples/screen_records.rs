//! How often the screener makes an arm record over a whole enumeration of the shipped library
//! (all architectures, Dn-A up to four mixed donors, no weight limit: the benchmark's
//! enumeration): tuples, runs of one core, records made, and the scoring time (one core).
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
    let mut screener = Screener::new(&bound, &set);
    let (mut tuples, mut runs, mut scored) = (0u64, 0u64, 0u64);
    let mut key = None;
    let mut time = std::time::Duration::ZERO;
    en.for_each(|e| {
        if let TupleEvent::Admitted(t) = e {
            tuples += 1;
            let donor_side = t.architecture == Architecture::ADA
                || set.cards[t.core].role == lumisift::model::Role::Donor;
            if key != Some((t.core, donor_side)) {
                key = Some((t.core, donor_side));
                runs += 1;
            }
            let t0 = std::time::Instant::now();
            scored += u64::from(screener.score(&t).is_some());
            time += t0.elapsed();
        }
        ControlFlow::Continue(())
    });
    println!(
        "{tuples} tuples ({scored} with a donor–acceptor path), {runs} runs of one core and side, {} arm records made ({:.2} % of tuples); scoring {:.2} s ({:.0} ns a tuple incl. the timer)",
        screener.records_made(),
        100.0 * screener.records_made() as f64 / tuples as f64,
        time.as_secs_f64(),
        time.as_secs_f64() * 1e9 / tuples as f64
    );
}
