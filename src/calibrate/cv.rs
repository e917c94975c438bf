//! Cross-validation with folds grouped by fragment key.
//!
//! Ordinary k-fold CV puts candidates that share a donor on both sides of a split and so
//! reports how well the model interpolates between known fragments. Grouped ("leave-cluster-out")
//! CV holds out whole groups, which is what a screening campaign needs: how well does the
//! correction carry to candidates built from a fragment it never saw? (Roberts et al.,
//! Ecography 40, 913–929 (2017), on blocked CV for structured data; Sheridan, J. Chem. Inf.
//! Model. 53, 783–790 (2013), on realistic splits in QSAR.)
//!
//! A candidate carries several keys (donor, acceptor, bridge), so "the group" of a point is not
//! unique; the algorithm in [`grouped_folds`] decides.

use std::collections::BTreeMap;

use super::CalibrateError;

/// Grouped folds: for fold j, the held-out keys, the test points (each point is a test point
/// of exactly one fold) and the training points (no point containing a held-out key of the
/// fold, and none of its test points).
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct Folds {
    pub held_keys: Vec<Vec<String>>,
    pub test: Vec<Vec<usize>>,
    pub train: Vec<Vec<usize>>,
}

impl Folds {
    pub fn len(&self) -> usize {
        self.test.len()
    }

    pub fn is_empty(&self) -> bool {
        self.test.is_empty()
    }
}

/// Build grouped folds over points with fragment keys `groups[i]`.
///
/// Algorithm (deterministic; no random numbers):
/// 1. For each key, count the points that contain it. Keys carried by more than
///    `max_fraction` × n points are never held out (holding out a key on every point would leave
///    nothing to train on).
/// 2. Visit the other keys by count, largest first (ties: key in byte order). Let P be the
///    points containing the key that no fold has taken yet; skip the key if P is empty. While
///    fewer than `max_folds` folds exist, the key opens a new fold; otherwise it joins the fold
///    with the fewest test points (ties: lowest index) among those whose excluded set (points
///    containing any of its keys) stays within `max_fraction` × n, or is skipped if none
///    qualifies. P becomes test points of that fold.
/// 3. Points left without a fold (all their keys skipped or never held out) go, in index order,
///    to the fold with the fewest test points (ties: lowest index).
/// 4. The training set of fold j is every point that is not a test point of j and contains
///    none of its held-out keys.
///
/// So every test point is predicted by a model that never saw at least one of its fragments
/// (except points of step 3), and with few keys the scheme is leave-one-fragment-out.
/// Returns no folds when no key can be held out. Complexity O(K·n·g) for K keys and g keys per
/// point.
pub fn grouped_folds<G, S>(groups: &[G], max_folds: usize, max_fraction: f64) -> Folds
where
    G: AsRef<[S]>,
    S: AsRef<str>,
{
    let n = groups.len();
    let has = |i: usize, key: &str| groups[i].as_ref().iter().any(|g| g.as_ref() == key);
    let mut count: BTreeMap<&str, usize> = BTreeMap::new();
    for g in groups {
        let mut keys: Vec<&str> = g.as_ref().iter().map(|s| s.as_ref()).collect();
        keys.sort_unstable();
        keys.dedup();
        for k in keys {
            *count.entry(k).or_default() += 1;
        }
    }
    let limit = max_fraction * n as f64;
    let mut keys: Vec<(&str, usize)> = count
        .into_iter()
        .filter(|&(_, c)| c as f64 <= limit)
        .collect();
    keys.sort_by(|a, b| b.1.cmp(&a.1).then(a.0.cmp(b.0)));

    let mut assigned: Vec<Option<usize>> = vec![None; n];
    let mut held: Vec<Vec<String>> = Vec::new();
    let mut test: Vec<Vec<usize>> = Vec::new();
    let mut excluded: Vec<Vec<bool>> = Vec::new();
    for (key, _) in keys {
        let p: Vec<usize> = (0..n)
            .filter(|&i| assigned[i].is_none() && has(i, key))
            .collect();
        if p.is_empty() {
            continue;
        }
        let j = if held.len() < max_folds {
            held.push(Vec::new());
            test.push(Vec::new());
            excluded.push(vec![false; n]);
            held.len() - 1
        } else {
            let mut best: Option<usize> = None;
            for j in 0..held.len() {
                let size = (0..n).filter(|&i| excluded[j][i] || has(i, key)).count();
                if size as f64 > limit {
                    continue;
                }
                if best.is_none_or(|b| test[j].len() < test[b].len()) {
                    best = Some(j);
                }
            }
            match best {
                Some(j) => j,
                None => continue,
            }
        };
        held[j].push(key.to_string());
        for i in 0..n {
            if has(i, key) {
                excluded[j][i] = true;
            }
        }
        for &i in &p {
            assigned[i] = Some(j);
            test[j].push(i);
        }
    }
    if held.is_empty() {
        return Folds::default();
    }
    for i in 0..n {
        if assigned[i].is_none() {
            let j = (0..test.len())
                .min_by_key(|&j| (test[j].len(), j))
                .expect("at least one fold");
            assigned[i] = Some(j);
            test[j].push(i);
        }
    }
    for t in test.iter_mut() {
        t.sort_unstable();
    }
    let train = (0..held.len())
        .map(|j| {
            (0..n)
                .filter(|&i| assigned[i] != Some(j) && !excluded[j][i])
                .collect()
        })
        .collect();
    Folds {
        held_keys: held,
        test,
        train,
    }
}

/// Out-of-fold predictions: for each fold, `fit_predict(train, test)` fits on the training
/// indices and returns predictions for the test indices (in their order). Returns one
/// prediction per point (every point is a test point of exactly one fold).
///
/// # Errors
/// The first error of `fit_predict`.
pub fn cross_predict<F>(
    folds: &Folds,
    n: usize,
    mut fit_predict: F,
) -> Result<Vec<f64>, CalibrateError>
where
    F: FnMut(&[usize], &[usize]) -> Result<Vec<f64>, CalibrateError>,
{
    let mut out = vec![f64::NAN; n];
    for (train, test) in folds.train.iter().zip(&folds.test) {
        let p = fit_predict(train, test)?;
        assert_eq!(p.len(), test.len(), "one prediction per test point");
        for (&i, v) in test.iter().zip(p) {
            out[i] = v;
        }
    }
    Ok(out)
}
