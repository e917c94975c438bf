//! The fast fragment tier: O(1) estimates per tuple from cached fragment parameters, to
//! pre-screen libraries far larger than the π tier can touch.
//!
//! - [`cards`]: each fragment's own π calculation (HOMO, LUMO, local S1 and T1 capped with
//!   hydrogen) and the torsion profile of each attachment site against a phenyl probe; site
//!   pairs tabulated into equilibrium twist and ⟨cos²θ⟩ by an additive model.
//! - [`pairs`]: the π tier's own torsion-averaged S1, T1, ΔEST and f of every donor–acceptor,
//!   donor–bridge and bridge–acceptor dimer of the fragments a run uses (shipped library:
//!   cached in `data/fast-pairs.csv`; anything else estimated once per run, in parallel).
//! - [`features`]: per tuple, the donor–acceptor paths (orbital gap, coupling along the path),
//!   the lowest local excitations, the arms' dimers — table look-ups, no graph, no allocation.
//! - [`model`]: a D–A tuple takes its dimer's π-tier values; otherwise per quantity
//!   (torsion-averaged S1, log ΔEST and log f of the π tier; T1 derived) a linear model on those
//!   descriptors per class (bridged; several direct arms), per-bridge slopes and additive
//!   fragment terms, fitted to π-tier results by `examples/fit_fast_tier.rs`; coefficients and the fit's held-out figures live in
//!   `data/fast-tier.toml`. Tuples are ordered by log10 k_TADF from these values.
//! - [`screen`]: the cascade's hot path, the screen score of an enumeration's stream from
//!   records of each core's arms (the same numbers as the model's, a few times faster).
//! - [`trees`]: gradient-boosted oblivious regression trees, the screen score's correction.
//! - [`fit`]: ridge regression, Spearman ρ, top-k retention, the fit and its evaluation.
//!
//! It is a screen, not an estimate to report: its numbers only order tuples for the π tier.

pub mod cards;
pub mod features;
pub mod fit;
pub mod model;
pub mod pairs;
pub mod screen;
pub mod trees;

pub use cards::{CardSet, FragmentCard, fragment_card, reference_profile};
pub use features::{Describer, FEATURE_NAMES, N_FEATURES, TupleClass, TupleSummary, describe};
pub use model::{BoundModel, FastEstimate, FastModel, ScreenFit};
pub use screen::Screener;
