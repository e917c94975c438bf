//! The fast-tier benchmark's tuples, shared by `benches/fast.rs` and
//! `examples/fast_tier_profile.rs` (whose instruction counts must be of the very same loops).

use std::ops::ControlFlow;

use lumisift::combine::{DnAMode, EnumerateParams, Enumerator, Tuple, TupleEvent};
use lumisift::fragments::Library;
use lumisift::model::Architecture;

/// 100,000 admitted tuples of `lib` (all architectures, Dn-A up to four mixed donors): blocks
/// of 1,000 consecutive tuples, one block in every 7,000, so every architecture is represented
/// and each block is the stream the screen meets (it describes tuples in enumeration order,
/// reusing unchanged arms); with `every7`, every 7th tuple instead (no two consecutive).
pub fn tuples(lib: &Library, every7: bool) -> Vec<Tuple> {
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
            let take = if every7 {
                k.is_multiple_of(7)
            } else {
                k % 7000 < 1000
            };
            if take {
                tuples.push(t);
            }
            k += 1;
        }
        if tuples.len() >= 100_000 {
            ControlFlow::Break(())
        } else {
            ControlFlow::Continue(())
        }
    });
    tuples
}
