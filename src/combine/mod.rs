//! Enumeration of donor–acceptor architectures from fragments, with symmetry-aware reduction
//! of site assignments, tuple-level constraints, and assembly of candidate graphs.
//!
//! A *tuple* is (architecture, core fragment, one arm per core site). An arm is hydrogen, a
//! terminal fragment, or a bridge (in a stated orientation) carrying a terminal fragment. Tuples
//! are generated in a fixed order (architectures as listed, cores and arms by fragment id) and
//! streamed: memory does not grow with the size of the library.
//!
//! Symmetry: each fragment knows the permutations of its sites that leave it unchanged
//! (`Fragment::site_symmetry`, exact). A tuple is emitted only when its arm vector is the
//! lexicographically smallest image under the core's site permutations (one representative per
//! orbit: the count of emitted tuples follows Burnside's lemma), and a two-site bridge whose
//! sites are equivalent is used in one orientation only. Molecules that still coincide (a D–A–D
//! that equals a Dn–A, say) are merged by candidate identity in the store, with every
//! provenance kept.
//!
//! Tuple-level facts (molecular weight, heavy atoms) are exact sums over fragments, so
//! constraints run before any graph is built; graphs are assembled only for admitted tuples.

mod assemble;
mod enumerate;

pub use assemble::assemble;
pub use enumerate::{
    Arm, Counts, DnAMode, EnumerateParams, Enumerator, Rejection, RoleFilter, Tuple, TupleEvent,
};
