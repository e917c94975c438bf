//! Next batch to compute: upper confidence bound with a diversity constraint.
//!
//! Each pool candidate has a predicted objective μ (larger is better; negate a quantity to be
//! minimised), an uncertainty σ (e.g. the conformal half-width, larger out of domain) and a
//! fingerprint. The score is the upper confidence bound
//!
//! ```text
//! score_i = μ_i + β·σ_i
//! ```
//!
//! (UCB: Auer, Mach. Learn. 47, 235–256 (2002); in Bayesian optimisation, GP-UCB of Srinivas,
//! Krause, Kakade & Seeger, ICML 2010, here with a constant β). With σ an interval half-width
//! and β = 1 the score is the upper end of the interval.
//!
//! A batch of K from one model would otherwise pile onto near-duplicates of one good
//! candidate, so the pick is greedy with a similarity constraint, as in sphere-exclusion
//! selection (Gobbi & Lee, J. Chem. Inf. Comput. Sci. 43, 317–323 (2003); Butina,
//! J. Chem. Inf. Comput. Sci. 39, 747–750 (1999)): candidates are visited by descending score
//! (ties: lower index), and one is taken only if
//!
//! ```text
//! max over c in (computed ∪ picked) of Tanimoto(fp_i, fp_c) ≤ max_similarity
//! ```
//!
//! until K are taken. Tanimoto similarity c/(a + b − c) on bit fingerprints ([`tanimoto`];
//! Willett, Barnard & Downs, J. Chem. Inf. Comput. Sci. 38, 983–996 (1998)). Fewer than K are
//! returned when the constraint excludes the rest of the pool; the caller may relax it.

use serde::{Deserialize, Serialize};

use super::CalibrateError;
use crate::chem::{Fingerprint, tanimoto};

/// One candidate of the pool.
#[derive(Debug, Clone, PartialEq)]
pub struct PoolCandidate {
    /// Predicted objective (larger is better).
    pub mean: f64,
    /// Uncertainty of the prediction (≥ 0), e.g. an interval half-width.
    pub sigma: f64,
    pub fingerprint: Fingerprint,
}

/// Settings of [`suggest`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SuggestParams {
    /// Batch size K. Default 40.
    pub k: usize,
    /// Weight β of the uncertainty. Default 1.0 (the upper end of the interval).
    pub beta: f64,
    /// Largest Tanimoto similarity allowed to any computed or already picked candidate.
    /// Default 0.7 (a project choice: close analogues on ECFP4-like fingerprints lie above it).
    pub max_similarity: f64,
}

impl Default for SuggestParams {
    fn default() -> Self {
        SuggestParams {
            k: 40,
            beta: 1.0,
            max_similarity: 0.7,
        }
    }
}

/// One picked candidate.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Suggestion {
    /// Index into the pool.
    pub index: usize,
    /// μ + β·σ.
    pub score: f64,
}

/// Pick up to `params.k` pool candidates by upper confidence bound under the similarity
/// constraint (see the module docs), in the order picked. Candidates with a non-finite score
/// are never picked. Deterministic.
///
/// Complexity O(N log N + V·(C + K)·w) for N candidates, V visited, C computed fingerprints and
/// w words per fingerprint.
///
/// # Errors
/// [`CalibrateError::BadParams`] for a negative β, a threshold outside [0, 1], or fingerprints of
/// different lengths.
pub fn suggest(
    pool: &[PoolCandidate],
    computed: &[Fingerprint],
    params: &SuggestParams,
) -> Result<Vec<Suggestion>, CalibrateError> {
    if !(params.beta >= 0.0 && params.beta.is_finite()) {
        return Err(CalibrateError::BadParams("beta must be ≥ 0".into()));
    }
    if !(0.0..=1.0).contains(&params.max_similarity) {
        return Err(CalibrateError::BadParams(
            "max_similarity must lie in [0, 1]".into(),
        ));
    }
    let words = pool
        .first()
        .map(|c| c.fingerprint.words.len())
        .or(computed.first().map(|f| f.words.len()));
    if let Some(w) = words
        && (pool.iter().any(|c| c.fingerprint.words.len() != w)
            || computed.iter().any(|f| f.words.len() != w))
    {
        return Err(CalibrateError::BadParams(
            "fingerprints of different lengths".into(),
        ));
    }
    let mut order: Vec<(usize, f64)> = pool
        .iter()
        .enumerate()
        .map(|(i, c)| (i, c.mean + params.beta * c.sigma))
        .filter(|(_, s)| s.is_finite())
        .collect();
    order.sort_by(|a, b| b.1.total_cmp(&a.1).then(a.0.cmp(&b.0)));
    let mut picked: Vec<Suggestion> = Vec::with_capacity(params.k);
    for (i, score) in order {
        if picked.len() >= params.k {
            break;
        }
        let fp = &pool[i].fingerprint;
        let too_close = computed
            .iter()
            .chain(picked.iter().map(|s| &pool[s.index].fingerprint))
            .any(|c| tanimoto(fp, c) > params.max_similarity);
        if !too_close {
            picked.push(Suggestion { index: i, score });
        }
    }
    Ok(picked)
}
