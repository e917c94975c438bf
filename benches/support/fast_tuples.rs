//! The fast-tier benchmark's tuples, shared by `benches/fast.rs` and
//! `examples/fast_tier_profile.rs` (whose instruction counts must be of the very same loops).

use std::ops::ControlFlow;

use lumisift::combine::{DnAMode, EnumerateParams, Enumerator, Tuple, TupleEvent};
use lumisift::fragments::Library;
use lumisift::model::Architecture;

/// How the 100,000 tuples are taken from the enumeration.
#[derive(Clone, Copy, PartialEq)]
#[allow(dead_code)] // the benchmark takes blocks only
pub enum Sample {
    /// Blocks of 1,000 consecutive tuples, one block in every 7,000: every architecture is
    /// represented and each block is the stream the screen meets (tuples in enumeration
    /// order, unchanged arms reused), cut short.
    Blocks,
    /// Every 7th tuple (no two consecutive).
    Every7,
    /// Ten runs of 10,000 consecutive tuples, one run in every 240,000 (the shipped library
    /// has 2.43·10^6): longer stretches of one core, closer to a whole screen.
    Runs,
    /// The whole enumeration, in order (2.43·10^6 tuples, about 0.4 GB): the stream a screen
    /// of the whole library meets.
    Whole,
}

/// 100,000 admitted tuples of `lib` (all architectures, Dn-A up to four mixed donors), or
/// every one ([`Sample::Whole`]).
pub fn tuples(lib: &Library, sample: Sample) -> Vec<Tuple> {
    let params = EnumerateParams {
        architectures: Architecture::ALL.to_vec(),
        dn_a_max: 4,
        dn_a_mode: DnAMode::Mixed,
        ..EnumerateParams::default()
    };
    let en = Enumerator::new(lib, &params).expect("enumerator");
    let mut tuples = Vec::new();
    let mut k = 0usize;
    en.for_each(|e| {
        if let TupleEvent::Admitted(t) = e {
            let take = match sample {
                Sample::Blocks => k % 7000 < 1000,
                Sample::Every7 => k.is_multiple_of(7),
                Sample::Runs => k % 240_000 < 10_000,
                Sample::Whole => true,
            };
            if take {
                tuples.push(t);
            }
            k += 1;
        }
        if sample != Sample::Whole && tuples.len() >= 100_000 {
            ControlFlow::Break(())
        } else {
            ControlFlow::Continue(())
        }
    });
    tuples
}
