//! Diversity picking: MaxMin on fingerprints with a similarity ceiling and a per-fragment cap.
//!
//! MaxMin (Ashton et al., "Identification of diverse database subsets using property-based and
//! fragment-based molecular descriptions", Quant. Struct.-Act. Relat. 21, 598–604 (2002); the
//! same farthest-point rule as Kennard & Stone, Technometrics 11, 137–148 (1969)): start from a
//! seed, then repeatedly add the candidate whose largest Tanimoto similarity to the picks made
//! so far is smallest (distance = 1 − Tanimoto, the largest minimum distance).
//!
//! Choices here:
//! * the pool is the ranked list, best first, cut to its first `pool_size` entries (0 = all):
//!   MaxMin alone ignores merit, so the pool bounds how far down the ranking it may reach;
//! * the seed is the best-ranked entry (deterministic; no random seed);
//! * a candidate is eligible only while its similarity to every pick is ≤ `max_similarity`
//!   and adding it keeps every fragment id at most `max_per_fragment` times among the picks
//!   (an id counted once per candidate, so a D–A–D with two identical donors counts that donor
//!   once); ties in similarity go to the better-ranked entry;
//! * when no eligible entry remains, picking stops early ([`StopReason`]): the ceiling is
//!   never relaxed, so no two picks are more similar than `max_similarity`.
//!
//! Complexity O(P·k) Tanimoto evaluations for a pool of P and k picks (each pick updates every
//! remaining entry's largest similarity once: the lazy update of the MaxMin paper).

use std::collections::HashMap;

use serde::{Deserialize, Serialize};

use crate::chem::Fingerprint;

/// Settings of [`pick_diverse`]. Defaults: 20 picks, similarity ceiling 0.6, at most 3 picks
/// per fragment id, a pool of the best 1000 (our defaults for a synthesis shortlist).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct DiversityParams {
    pub n_pick: usize,
    /// Largest Tanimoto similarity allowed between two picks.
    pub max_similarity: f64,
    /// Largest number of picks sharing one fragment id (`None` = no cap).
    pub max_per_fragment: Option<usize>,
    /// Consider only the first `pool_size` ranked entries (0 = all).
    pub pool_size: usize,
}

impl Default for DiversityParams {
    fn default() -> Self {
        DiversityParams {
            n_pick: 20,
            max_similarity: 0.6,
            max_per_fragment: Some(3),
            pool_size: 1000,
        }
    }
}

impl DiversityParams {
    pub fn validate(&self) -> Result<(), String> {
        if !(0.0..=1.0).contains(&self.max_similarity) {
            return Err(format!(
                "max_similarity = {} is not in [0, 1]",
                self.max_similarity
            ));
        }
        if self.max_per_fragment == Some(0) {
            return Err("max_per_fragment = 0 would pick nothing".into());
        }
        Ok(())
    }
}

/// One entry of the ranked pool.
#[derive(Debug, Clone, Copy)]
pub struct PickInput<'a> {
    pub fingerprint: &'a Fingerprint,
    pub fragment_ids: &'a [String],
}

/// One pick.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Pick {
    /// Index into the pool (= rank position).
    pub pool_index: usize,
    /// Largest similarity to the earlier picks (`None` for the seed).
    pub max_similarity: Option<f64>,
    /// The earlier pick it is most similar to.
    pub nearest_pick: Option<usize>,
}

/// Why picking stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum StopReason {
    /// `n_pick` picks made.
    Complete,
    /// Every pool entry was picked.
    PoolExhausted,
    /// The remaining entries are all too similar to a pick or hit a fragment cap.
    NoEligible,
}

/// The shortlist.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Picks {
    pub picks: Vec<Pick>,
    pub stop: StopReason,
    /// Pool entries left out at the end because of the similarity ceiling / a fragment cap
    /// (an entry failing both counts in both).
    pub excluded_by_similarity: usize,
    pub excluded_by_fragment_cap: usize,
}

/// MaxMin picks from `pool` (best-ranked first); see the module documentation.
///
/// # Errors
/// Invalid settings.
pub fn pick_diverse(pool: &[PickInput<'_>], params: &DiversityParams) -> Result<Picks, String> {
    params.validate()?;
    let n = if params.pool_size == 0 {
        pool.len()
    } else {
        pool.len().min(params.pool_size)
    };
    let pool = &pool[..n];
    // Fragment ids as small integers (each id once per candidate), counts in a vector.
    let mut intern: HashMap<&str, u32> = HashMap::new();
    let ids: Vec<Vec<u32>> = pool
        .iter()
        .map(|p| {
            let mut v: Vec<u32> = p
                .fragment_ids
                .iter()
                .map(|s| {
                    let k = intern.len() as u32;
                    *intern.entry(s.as_str()).or_insert(k)
                })
                .collect();
            v.sort_unstable();
            v.dedup();
            v
        })
        .collect();
    let ones: Vec<u32> = pool.iter().map(|p| p.fingerprint.count_ones()).collect();
    // The pool's fingerprints copied once into one buffer in pool order, so each pick's
    // update pass reads memory sequentially.
    let w = pool.first().map_or(0, |p| p.fingerprint.words.len());
    let mut flat: Vec<u64> = Vec::with_capacity(n * w);
    for p in pool {
        assert_eq!(p.fingerprint.words.len(), w, "fingerprint lengths differ");
        flat.extend_from_slice(&p.fingerprint.words);
    }
    let fp = |i: usize| &flat[i * w..(i + 1) * w];
    let mut max_sim = vec![f64::NEG_INFINITY; n];
    let mut nearest = vec![usize::MAX; n];
    let mut picked = vec![false; n];
    let mut counts: Vec<usize> = vec![0; intern.len()];
    let cap = params.max_per_fragment.unwrap_or(usize::MAX);
    let capped = |counts: &[usize], i: usize| ids[i].iter().any(|&id| counts[id as usize] >= cap);
    let mut picks: Vec<Pick> = Vec::new();
    let mut stop = StopReason::Complete;
    while picks.len() < params.n_pick {
        // The eligible entry with the smallest largest-similarity (first on ties).
        let mut best: Option<usize> = None;
        for i in 0..n {
            if picked[i] || max_sim[i] > params.max_similarity || capped(&counts, i) {
                continue;
            }
            if best.is_none_or(|b| max_sim[i] < max_sim[b]) {
                best = Some(i);
            }
        }
        let Some(p) = best else {
            stop = if picks.len() == n {
                StopReason::PoolExhausted
            } else {
                StopReason::NoEligible
            };
            break;
        };
        picked[p] = true;
        picks.push(Pick {
            pool_index: p,
            max_similarity: (!picks.is_empty()).then_some(max_sim[p]),
            nearest_pick: (nearest[p] != usize::MAX).then_some(nearest[p]),
        });
        for &id in &ids[p] {
            counts[id as usize] += 1;
        }
        for i in 0..n {
            if picked[i] {
                continue;
            }
            let s = similarity(fp(i), fp(p), ones[i], ones[p]);
            if s > max_sim[i] {
                max_sim[i] = s;
                nearest[i] = p;
            }
        }
    }
    if stop == StopReason::Complete && picks.len() < params.n_pick {
        stop = StopReason::PoolExhausted;
    }
    let rest = (0..n).filter(|&i| !picked[i]);
    let excluded_by_similarity = rest
        .clone()
        .filter(|&i| max_sim[i] > params.max_similarity)
        .count();
    let excluded_by_fragment_cap = rest.filter(|&i| capped(&counts, i)).count();
    Ok(Picks {
        picks,
        stop,
        excluded_by_similarity,
        excluded_by_fragment_cap,
    })
}

/// Tanimoto c / (a + b − c) with the bit counts a, b known: the same value as
/// [`crate::chem::tanimoto`] (|x ∪ y| = a + b − c), one popcount per word instead of two.
fn similarity(x: &[u64], y: &[u64], a: u32, b: u32) -> f64 {
    let c: u32 = x.iter().zip(y).map(|(p, q)| (p & q).count_ones()).sum();
    let any = a + b - c;
    if any == 0 { 1.0 } else { c as f64 / any as f64 }
}
