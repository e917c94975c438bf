//! Gradient-boosted oblivious regression trees (least squares): the screen score's correction
//! on top of its ridge part.
//!
//! An oblivious tree asks the same question — descriptor `f_k` above threshold `t_k` — of every
//! node at depth k, so a tree of depth D is D comparisons whose answers, read as bits, index
//! one of 2^D leaves: no branches to mispredict, a few nanoseconds per tree. Boosting by least
//! squares (Friedman, Ann. Statist. 29, 1189 (2001)) fits each tree to the residuals of the
//! ones before, shrunk by a learning rate; the symmetric form is that of Prokhorenkova et al.,
//! NeurIPS 2018. Splits are chosen exactly over candidate thresholds at quantiles of each
//! descriptor (midpoints between neighbouring distinct values), leaves are the shrunk,
//! L2-regularised mean residual. Deterministic: ties go to the lower descriptor index and the
//! lower threshold.

use serde::{Deserialize, Serialize};

/// Depth of every tree (16 leaves).
pub const DEPTH: usize = 4;
const LEAVES: usize = 1 << DEPTH;

/// One oblivious tree: the leaf index is Σ_k [x[features[k]] > thresholds[k]]·2^k.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Tree {
    pub features: [usize; DEPTH],
    pub thresholds: [f64; DEPTH],
    pub leaves: [f64; LEAVES],
}

impl Tree {
    #[inline]
    pub fn leaf(&self, x: &[f64]) -> usize {
        let mut idx = 0;
        for k in 0..DEPTH {
            idx |= usize::from(x[self.features[k]] > self.thresholds[k]) << k;
        }
        idx
    }
}

/// Settings of a boosting run.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BoostParams {
    pub trees: usize,
    pub learning_rate: f64,
    /// L2 penalty on a leaf's value (in rows: a leaf of n rows is shrunk by n/(n + l2)).
    pub l2: f64,
    /// Candidate thresholds per descriptor, at most.
    pub thresholds: usize,
}

/// Candidate thresholds of one descriptor: midpoints between neighbouring distinct values, at
/// most `max` of them, spread over the quantiles.
fn candidates(values: &mut [f64], max: usize) -> Vec<f64> {
    values.sort_by(f64::total_cmp);
    let mut distinct: Vec<f64> = Vec::new();
    for &v in values.iter() {
        if distinct.last().is_none_or(|&l| v > l) {
            distinct.push(v);
        }
    }
    if distinct.len() < 2 {
        return Vec::new();
    }
    let n = distinct.len() - 1;
    let mut out: Vec<f64> = (0..max.min(n))
        .map(|k| {
            let i = (k * n) / max.min(n);
            0.5 * (distinct[i] + distinct[i + 1])
        })
        .collect();
    out.dedup();
    out
}

/// Fit trees to `y` − `init` on `rows` (descriptor vectors), splitting only on the descriptors
/// `allowed`. Returns the trees; a row's prediction is `init` + Σ leaves.
pub fn boost(
    rows: &[&[f64]],
    y: &[f64],
    init: &[f64],
    allowed: &[usize],
    p: &BoostParams,
) -> Vec<Tree> {
    let n = rows.len();
    assert_eq!(y.len(), n);
    assert_eq!(init.len(), n);
    // Thresholds per allowed descriptor, and each row's bin (thresholds it exceeds).
    let cand: Vec<Vec<f64>> = allowed
        .iter()
        .map(|&f| {
            let mut v: Vec<f64> = rows.iter().map(|r| r[f]).collect();
            candidates(&mut v, p.thresholds)
        })
        .collect();
    let bins: Vec<Vec<u16>> = allowed
        .iter()
        .zip(&cand)
        .map(|(&f, c)| {
            rows.iter()
                .map(|r| c.partition_point(|&t| r[f] > t) as u16)
                .collect()
        })
        .collect();
    let mut pred = init.to_vec();
    let mut trees = Vec::with_capacity(p.trees);
    let mut leaf_of = vec![0usize; n];
    for _ in 0..p.trees {
        let resid: Vec<f64> = y.iter().zip(&pred).map(|(a, b)| a - b).collect();
        leaf_of.iter_mut().for_each(|l| *l = 0);
        let mut features = [0usize; DEPTH];
        let mut thresholds = [f64::INFINITY; DEPTH];
        for level in 0..DEPTH {
            let groups = 1 << level;
            // (gain, allowed index, threshold index)
            let mut best: Option<(f64, usize, usize)> = None;
            for (a, c) in cand.iter().enumerate() {
                if c.is_empty() {
                    continue;
                }
                let nb = c.len() + 1;
                // Per group and bin: residual sum and count.
                let mut sum = vec![0.0; groups * nb];
                let mut cnt = vec![0.0; groups * nb];
                for i in 0..n {
                    let k = leaf_of[i] * nb + bins[a][i] as usize;
                    sum[k] += resid[i];
                    cnt[k] += 1.0;
                }
                // Totals per group, then sweep the thresholds: bins ≤ b go to the 0 side.
                let tot: Vec<(f64, f64)> = (0..groups)
                    .map(|g| {
                        let s = &sum[g * nb..(g + 1) * nb];
                        let c = &cnt[g * nb..(g + 1) * nb];
                        (s.iter().sum(), c.iter().sum())
                    })
                    .collect();
                let mut left = vec![(0.0, 0.0); groups];
                for b in 0..c.len() {
                    let mut gain = 0.0;
                    for g in 0..groups {
                        left[g].0 += sum[g * nb + b];
                        left[g].1 += cnt[g * nb + b];
                        let (sl, nl) = left[g];
                        let (sr, nr) = (tot[g].0 - sl, tot[g].1 - nl);
                        gain += sl * sl / (nl + p.l2) + sr * sr / (nr + p.l2);
                    }
                    if best.is_none_or(|(g, _, _)| gain > g + 1e-12) {
                        best = Some((gain, a, b));
                    }
                }
            }
            let Some((_, a, b)) = best else {
                break;
            };
            features[level] = allowed[a];
            thresholds[level] = cand[a][b];
            for i in 0..n {
                leaf_of[i] |= usize::from(bins[a][i] as usize > b) << level;
            }
        }
        let mut s = [0.0; LEAVES];
        let mut c = [0.0; LEAVES];
        for i in 0..n {
            s[leaf_of[i]] += resid[i];
            c[leaf_of[i]] += 1.0;
        }
        let mut leaves = [0.0; LEAVES];
        for k in 0..LEAVES {
            leaves[k] = p.learning_rate * s[k] / (c[k] + p.l2);
        }
        for i in 0..n {
            pred[i] += leaves[leaf_of[i]];
        }
        trees.push(Tree {
            features,
            thresholds,
            leaves,
        });
    }
    trees
}

/// Σ of the trees' leaves for `x`.
#[inline]
pub fn predict(trees: &[Tree], x: &[f64]) -> f64 {
    trees.iter().map(|t| t.leaves[t.leaf(x)]).sum()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A step in one descriptor among noise descriptors: the first split finds the step's
    /// descriptor and a threshold between the two levels, and boosting drives the residual
    /// towards zero.
    #[test]
    fn boosting_finds_a_step() {
        let rows: Vec<Vec<f64>> = (0..200)
            .map(|i| {
                let a = i as f64 / 200.0;
                vec![1.0, ((i * 37) % 200) as f64, a, ((i * 91) % 13) as f64]
            })
            .collect();
        let y: Vec<f64> = rows
            .iter()
            .map(|r| if r[2] > 0.3 { 2.0 } else { -1.0 })
            .collect();
        let refs: Vec<&[f64]> = rows.iter().map(|r| r.as_slice()).collect();
        let p = BoostParams {
            trees: 30,
            learning_rate: 0.5,
            l2: 0.0,
            thresholds: 256,
        };
        let trees = boost(&refs, &y, &vec![0.0; 200], &[1, 2, 3], &p);
        assert_eq!(trees[0].features[0], 2);
        assert!(trees[0].thresholds[0] > 0.3 && trees[0].thresholds[0] < 0.305);
        let err: f64 = refs
            .iter()
            .zip(&y)
            .map(|(r, t)| (predict(&trees, r) - t).abs())
            .fold(0.0, f64::max);
        assert!(err < 0.01, "{err}");
    }
}
