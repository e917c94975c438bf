//! Small statistics for fitting and judging the fast tier: ridge regression, Spearman rank
//! correlation, and the top-k retention of a cascade.

use nalgebra::{DMatrix, DVector};

use super::model::ScreenFit;

/// Ridge regression: minimise ‖Xw − y‖² + α‖w‖² with the first column (the constant) not
/// penalised; columns are standardised before the penalty is applied so α means the same for
/// every descriptor. Returns weights in the original units. `rows` are descriptor vectors.
/// With α > 0 the system is positive definite, so more columns than rows are allowed (the
/// one-hot fragment columns of a small calibration set); with α = 0 at least p + 1 rows are
/// required.
pub fn ridge(rows: &[Vec<f64>], y: &[f64], alpha: f64) -> Option<Vec<f64>> {
    let n = rows.len();
    let p = rows.first()?.len();
    if y.len() != n || (n <= p && alpha <= 0.0) || n == 0 {
        return None;
    }
    // Standardise columns 1.. (column 0 is the constant).
    let mut mean = vec![0.0; p];
    let mut sd = vec![1.0; p];
    for j in 1..p {
        mean[j] = rows.iter().map(|r| r[j]).sum::<f64>() / n as f64;
        let v = rows.iter().map(|r| (r[j] - mean[j]).powi(2)).sum::<f64>() / n as f64;
        sd[j] = if v > 1e-24 { v.sqrt() } else { 1.0 };
    }
    let x = DMatrix::from_fn(n, p, |i, j| {
        if j == 0 {
            1.0
        } else {
            (rows[i][j] - mean[j]) / sd[j]
        }
    });
    let yv = DVector::from_column_slice(y);
    let mut a = x.transpose() * &x;
    for j in 1..p {
        a[(j, j)] += alpha;
    }
    let b = x.transpose() * yv;
    let w = a.cholesky()?.solve(&b);
    // Back to original units.
    let mut out = vec![0.0; p];
    out[0] = w[0];
    for j in 1..p {
        out[j] = w[j] / sd[j];
        out[0] -= w[j] * mean[j] / sd[j];
    }
    Some(out)
}

/// Ranks (0-based, ties averaged).
pub fn ranks(v: &[f64]) -> Vec<f64> {
    let mut idx: Vec<usize> = (0..v.len()).collect();
    idx.sort_by(|&a, &b| v[a].total_cmp(&v[b]));
    let mut r = vec![0.0; v.len()];
    let mut i = 0;
    while i < idx.len() {
        let mut j = i;
        while j + 1 < idx.len() && v[idx[j + 1]] == v[idx[i]] {
            j += 1;
        }
        for k in i..=j {
            r[idx[k]] = (i + j) as f64 / 2.0;
        }
        i = j + 1;
    }
    r
}

/// Spearman rank correlation (Pearson correlation of the ranks, ties averaged); NaN below
/// three points.
pub fn spearman(x: &[f64], y: &[f64]) -> f64 {
    if x.len() < 3 || x.len() != y.len() {
        return f64::NAN;
    }
    let (rx, ry) = (ranks(x), ranks(y));
    let n = x.len() as f64;
    let (mx, my) = (rx.iter().sum::<f64>() / n, ry.iter().sum::<f64>() / n);
    let cov: f64 = rx.iter().zip(&ry).map(|(a, b)| (a - mx) * (b - my)).sum();
    let vx: f64 = rx.iter().map(|a| (a - mx).powi(2)).sum();
    let vy: f64 = ry.iter().map(|b| (b - my).powi(2)).sum();
    cov / (vx * vy).sqrt()
}

/// Of the `top` best items by `truth` (smallest first), the fraction that are also among the
/// `passed` best by `screen` (smallest first): what a cascade passing `passed` items keeps.
/// Ties are broken by index, so the result is deterministic.
pub fn top_k_retention(truth: &[f64], screen: &[f64], top: usize, passed: usize) -> f64 {
    let order = |v: &[f64]| {
        let mut idx: Vec<usize> = (0..v.len()).collect();
        idx.sort_by(|&a, &b| v[a].total_cmp(&v[b]).then(a.cmp(&b)));
        idx
    };
    let best = order(truth);
    let kept = order(screen);
    let mut pass = vec![false; truth.len()];
    for &i in kept.iter().take(passed) {
        pass[i] = true;
    }
    let top = top.min(truth.len());
    if top == 0 {
        return f64::NAN;
    }
    best.iter().take(top).filter(|&&i| pass[i]).count() as f64 / top as f64
}

/// One π-tier result with the tuple's descriptors, for fitting or testing the fast tier.
#[derive(Debug, Clone, PartialEq)]
pub struct Sample {
    pub x: [f64; super::N_FEATURES],
    /// The tuple's summary (class, best path's fragments, best arm's dimer).
    pub summary: super::TupleSummary,
    /// Torsion-averaged π-tier values.
    pub s1_ev: f64,
    pub delta_est_ev: f64,
    pub f_s1: f64,
}

impl Sample {
    /// The π tier's log10 k_TADF of this tuple (`photophysics::log10_tadf_rate`).
    pub fn merit(&self, refractive_index: f64, temperature_k: f64) -> f64 {
        crate::photophysics::log10_tadf_rate(
            self.s1_ev,
            self.delta_est_ev,
            self.f_s1,
            refractive_index,
            temperature_k,
        )
    }

    fn targets(&self, screen: &ScreenFit) -> [f64; 4] {
        use super::model::{DEST_OFFSET_EV, F_FLOOR};
        [
            self.s1_ev,
            (self.delta_est_ev.max(0.0) + DEST_OFFSET_EV).log10(),
            (self.f_s1.max(0.0) + F_FLOOR).log10(),
            self.merit(screen.refractive_index, screen.temperature_k)
                .max(screen.floor),
        ]
    }
}

/// The choices a screen-score fit makes before seeing its rows: the floor's quantile, whether
/// the ridge part has the products, the boosting settings and the descriptor groups the trees
/// may ask about (empty: one group of every descriptor).
#[derive(Debug, Clone, PartialEq)]
pub struct ScreenSettings {
    pub floor_quantile: f64,
    pub products: bool,
    pub boost: super::trees::BoostParams,
    pub tree_groups: Vec<Vec<usize>>,
    /// The quantile of the fitting rows' ridge part from which the trees refine a tuple
    /// ([`super::ScreenFit::gate`]; None: every tuple).
    pub gate_quantile: Option<f64>,
}

/// The screen score's target settings for a fit: log10 k_TADF at `temperature_k` and
/// `refractive_index`, floored at the `settings.floor_quantile` quantile of every sample's
/// (dimers included: the floor is a point of the library's distribution).
pub fn screen_fit(
    samples: &[Sample],
    settings: &ScreenSettings,
    refractive_index: f64,
    temperature_k: f64,
) -> ScreenFit {
    let floor_quantile = settings.floor_quantile;
    let floor = quantile(
        samples
            .iter()
            .map(|s| s.merit(refractive_index, temperature_k)),
        floor_quantile,
    )
    .unwrap_or(f64::NEG_INFINITY);
    ScreenFit {
        floor_quantile,
        floor,
        temperature_k,
        refractive_index,
        products: settings.products,
        boost: settings.boost,
        tree_groups: settings.tree_groups.clone(),
        gate_quantile: settings.gate_quantile,
        // Set by the fit from its ridge part.
        gate: None,
    }
}

/// The `q` quantile of the finite `values`: the value at rank round((n − 1)·q) of the sorted
/// ones (no interpolation, so it is one of the values); None without a finite value. The rule
/// of the screen score's floor and of its trees' gate.
fn quantile(values: impl Iterator<Item = f64>, q: f64) -> Option<f64> {
    let mut v: Vec<f64> = values.filter(|v| v.is_finite()).collect();
    v.sort_by(f64::total_cmp);
    let k = (v.len().checked_sub(1)? as f64 * q.clamp(0.0, 1.0)).round() as usize;
    Some(v[k])
}

/// Cross-validated choice of the screen score's settings: for each [`ScreenSettings`] of
/// `grid`, the mean over `folds` folds (sample index mod `folds`) of the
/// fraction of each held-out fold's best `top_fraction` (by the π tier's log10 k_TADF) kept
/// when passing `pass_fraction` of it by the score fitted on the other folds. Returns the mean
/// retention per grid point and its standard error over the folds.
#[allow(clippy::too_many_arguments)]
pub fn cross_validate_screen(
    samples: &[Sample],
    ids: &[String],
    cards: &super::CardSet,
    alpha: f64,
    grid: &[ScreenSettings],
    folds: usize,
    top_fraction: f64,
    pass_fraction: f64,
    refractive_index: f64,
    temperature_k: f64,
) -> Vec<CvRetention> {
    grid.iter()
        .map(|settings| {
            let mut kept = Vec::with_capacity(folds);
            for k in 0..folds {
                let in_fold = |i: &usize| i % folds == k;
                let train: Vec<Sample> = (0..samples.len())
                    .filter(|i| !in_fold(i))
                    .map(|i| samples[i].clone())
                    .collect();
                let test: Vec<&Sample> = (0..samples.len())
                    .filter(in_fold)
                    .map(|i| &samples[i])
                    .collect();
                let sf = screen_fit(&train, settings, refractive_index, temperature_k);
                let Some(m) = fit_model(&train, ids, alpha, sf) else {
                    continue;
                };
                let bound = m.bind(cards, refractive_index, temperature_k);
                let truth: Vec<f64> = test
                    .iter()
                    .map(|s| -s.merit(refractive_index, temperature_k))
                    .collect();
                let score: Vec<f64> = test
                    .iter()
                    .map(|s| -bound.score_descriptors(&s.x, &s.summary).0)
                    .collect();
                let len = test.len();
                let top = ((len as f64 * top_fraction).round() as usize).max(1);
                let passed = (len as f64 * pass_fraction).round() as usize;
                kept.push(top_k_retention(&truth, &score, top, passed));
            }
            CvRetention::of(&kept)
        })
        .collect()
}

/// A cross-validated retention: the mean over the folds and its standard error (the folds'
/// sample standard deviation over √folds; 0 for fewer than two folds).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CvRetention {
    pub mean: f64,
    pub standard_error: f64,
}

impl CvRetention {
    fn of(folds: &[f64]) -> CvRetention {
        let n = folds.len() as f64;
        let mean = folds.iter().sum::<f64>() / n.max(1.0);
        let standard_error = if folds.len() < 2 {
            0.0
        } else {
            let var = folds.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0);
            (var / n).sqrt()
        };
        CvRetention {
            mean,
            standard_error,
        }
    }
}

/// Fit the fast model by ridge regression with penalty `alpha` on standardised columns, one
/// fit per target (the fourth the screen score of `screen`) over every sample that is not a
/// plain dimer (those take the pair table's
/// values): a shared constant, an indicator of the several-direct-arms class, the descriptors
/// once per class, per-bridge slopes and per-slot fragment indicators. `ids` are the library's
/// fragment ids by index; only fragments seen in a slot get a term for it. The fit record is
/// left for the caller to fill from held-out data.
pub fn fit_model(
    samples: &[Sample],
    ids: &[String],
    alpha: f64,
    screen: ScreenFit,
) -> Option<super::FastModel> {
    use super::TupleClass;
    use super::features::BRIDGE_SLOPE_FEATURES;
    use super::model::{Coefficients, FastModel, FitRecord};
    let samples: Vec<&Sample> = samples
        .iter()
        .filter(|s| s.summary.class != TupleClass::Dimer)
        .collect();
    let nf = ids.len();
    let mut seen = vec![[false; 3]; nf];
    for s in &samples {
        seen[s.summary.donor][0] = true;
        seen[s.summary.acceptor][1] = true;
        if let Some(b) = s.summary.bridge {
            seen[b][2] = true;
        }
    }
    // Fragment columns: one indicator per (slot, seen fragment).
    let mut cols: Vec<(usize, usize)> = Vec::new();
    for slot in 0..3 {
        for (f, s) in seen.iter().enumerate() {
            if s[slot] {
                cols.push((slot, f));
            }
        }
    }
    let bridges: Vec<usize> = (0..nf).filter(|&f| seen[f][2]).collect();
    let p = super::N_FEATURES;
    let nb = BRIDGE_SLOPE_FEATURES.len();
    // Layout: [1, multi, bridged × x[1..], multi × x[1..], slopes, fragments].
    let (o_b, o_m, o_s) = (2, 2 + (p - 1), 2 + 2 * (p - 1));
    let o_f = o_s + nb * bridges.len();
    let rows: Vec<Vec<f64>> = samples
        .iter()
        .map(|s| {
            let multi = s.summary.class == TupleClass::MultiArm;
            let mut r = vec![0.0; o_f + cols.len()];
            r[0] = 1.0;
            r[1] = if multi { 1.0 } else { 0.0 };
            let o = if multi { o_m } else { o_b };
            r[o..o + p - 1].copy_from_slice(&s.x[1..]);
            if let Some(b) = s.summary.bridge {
                let k = bridges.iter().position(|&x| x == b).expect("seen");
                for (j, &f) in BRIDGE_SLOPE_FEATURES.iter().enumerate() {
                    r[o_s + nb * k + j] = s.x[f];
                }
            }
            for (c, &(slot, f)) in cols.iter().enumerate() {
                let hit = match slot {
                    0 => s.summary.donor == f,
                    1 => s.summary.acceptor == f,
                    _ => s.summary.bridge == Some(f),
                };
                r[o_f + c] = if hit { 1.0 } else { 0.0 };
            }
            r
        })
        .collect();
    let targets: Vec<[f64; 4]> = samples.iter().map(|s| s.targets(&screen)).collect();
    let mut w = Vec::new();
    for k in 0..3 {
        let y: Vec<f64> = targets.iter().map(|t| t[k]).collect();
        w.push(ridge(&rows, &y, alpha)?);
    }
    // The screen score: the same columns plus, per class, every product of two descriptors
    // (a quadratic form; the cascade's question — which tuples reach the top — turns on how
    // the dimers' S1, ΔEST and f combine, which a sum of terms cannot say).
    let o_q = rows.first().map_or(0, Vec::len);
    let nq = if screen.products {
        super::model::N_PRODUCTS
    } else {
        0
    };
    let quad: Vec<Vec<f64>> = rows
        .iter()
        .zip(&samples)
        .map(|(r, s)| {
            let mut q = r.clone();
            q.resize(o_q + 2 * nq, 0.0);
            let o = o_q
                + if s.summary.class == TupleClass::MultiArm {
                    nq
                } else {
                    0
                };
            for (k, (i, j)) in super::model::products().take(nq).enumerate() {
                q[o + k] = s.x[i] * s.x[j];
            }
            q
        })
        .collect();
    let y: Vec<f64> = targets.iter().map(|t| t[3]).collect();
    let wq = ridge(&quad, &y, alpha)?;
    // Boosted trees on what the ridge part leaves (its in-sample prediction as the start).
    let init: Vec<f64> = quad
        .iter()
        .map(|r| r.iter().zip(&wq).map(|(a, b)| a * b).sum())
        .collect();
    // The gate: the ridge part's quantile over the fitting rows (the floor's rule).
    let mut screen = screen;
    screen.gate = screen
        .gate_quantile
        .and_then(|q| quantile(init.iter().copied(), q));
    let xs: Vec<&[f64]> = samples.iter().map(|s| s.x.as_slice()).collect();
    let groups: Vec<Vec<usize>> = if screen.tree_groups.is_empty() {
        vec![(1..super::N_FEATURES).collect()]
    } else {
        screen.tree_groups.clone()
    };
    let screen_trees = super::trees::boost(&xs, &y, &init, &groups, &screen.boost);
    let products = |multi: bool| {
        let o = o_q + if multi { nq } else { 0 };
        wq[o..o + nq].to_vec()
    };
    w.push(wq[..o_q].to_vec());
    let mut terms: [std::collections::BTreeMap<String, super::model::Terms>; 3] =
        Default::default();
    for (c, &(slot, f)) in cols.iter().enumerate() {
        terms[slot].insert(
            ids[f].clone(),
            [w[0][o_f + c], w[1][o_f + c], w[2][o_f + c], w[3][o_f + c]],
        );
    }
    let mut bridge_slopes = std::collections::BTreeMap::new();
    for (k, &b) in bridges.iter().enumerate() {
        let mut sl = [[0.0; 3]; 4];
        for (t, row) in sl.iter_mut().enumerate() {
            for (j, v) in row.iter_mut().enumerate() {
                *v = w[t][o_s + nb * k + j];
            }
        }
        bridge_slopes.insert(ids[b].clone(), sl);
    }
    let block = |o: usize, multi: bool| {
        let one = |t: usize| {
            let mut v = vec![w[t][0] + if multi { w[t][1] } else { 0.0 }];
            v.extend_from_slice(&w[t][o..o + p - 1]);
            v
        };
        Coefficients {
            s1_ev: one(0),
            log10_delta_est: one(1),
            log10_f: one(2),
            screen: one(3),
            screen_products: products(multi),
        }
    };
    let [donor_terms, acceptor_terms, bridge_terms] = terms;
    Some(FastModel {
        features: super::FEATURE_NAMES.iter().map(|s| s.to_string()).collect(),
        bridged: block(o_b, false),
        multi_arm: block(o_m, true),
        bridge_slopes,
        donor_terms,
        acceptor_terms,
        bridge_terms,
        screen,
        screen_trees,
        fit: FitRecord {
            fixture: String::new(),
            split: String::new(),
            ridge_alpha: alpha,
            n_fit: samples.len(),
            held_out: Evaluation::default(),
        },
    })
}

/// How a bound model does on held-out samples (`x` descriptors already in each sample; the
/// tuple-level prediction is recomputed from them and the fragment slots). The merit is
/// log10 k_TADF (the fast tier's composed from its S1, ΔEST and f); the cascade orders by the
/// screen score; `top100_kept_at_10pct` is the fraction of the π tier's 100 best by log10
/// k_TADF that the cascade keeps when passing 10 % by the score, `pass_fraction_for_95pct` the
/// smallest pass fraction (in steps of 1 %) that keeps 95 %.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Evaluation {
    pub n: usize,
    pub spearman_s1: f64,
    pub spearman_t1: f64,
    pub spearman_delta_est: f64,
    pub spearman_f: f64,
    pub spearman_merit: f64,
    pub spearman_score: f64,
    pub mae_s1_ev: f64,
    pub mae_t1_ev: f64,
    pub mae_delta_est_ev: f64,
    pub top100_kept_at_10pct: f64,
    pub pass_fraction_for_95pct: f64,
}

/// Evaluate `model` (its merit with the refractive index and temperature it was bound with)
/// on `samples`.
pub fn evaluate(samples: &[Sample], model: &super::BoundModel) -> Evaluation {
    use crate::photophysics::log10_tadf_rate;
    let (n, t_k) = (model.refractive_index, model.temperature_k);
    let p: Vec<(f64, f64, f64)> = samples
        .iter()
        .map(|s| {
            let (a, b, c, _) = model.predict_descriptors(&s.x, &s.summary);
            (a, b, c)
        })
        .collect();
    let col = |g: &dyn Fn(usize) -> f64| (0..samples.len()).map(g).collect::<Vec<f64>>();
    let ts1 = col(&|i| samples[i].s1_ev);
    let td = col(&|i| samples[i].delta_est_ev);
    let tt1 = col(&|i| samples[i].s1_ev - samples[i].delta_est_ev);
    let tf = col(&|i| samples[i].f_s1);
    let ps1 = col(&|i| p[i].0);
    let pd = col(&|i| p[i].1);
    let pt1 = col(&|i| p[i].0 - p[i].1);
    let pf = col(&|i| p[i].2);
    let tm = col(&|i| -log10_tadf_rate(ts1[i], td[i], tf[i], n, t_k));
    let pm = col(&|i| -log10_tadf_rate(ps1[i], pd[i], pf[i], n, t_k));
    let sc = col(&|i| {
        -model
            .score_descriptors(&samples[i].x, &samples[i].summary)
            .0
    });
    let mae = |a: &[f64], b: &[f64]| {
        a.iter().zip(b).map(|(x, y)| (x - y).abs()).sum::<f64>() / a.len().max(1) as f64
    };
    let len = samples.len();
    let mut pass95 = 1.0;
    for pct in 1..=100 {
        let passed = (len * pct).div_ceil(100);
        if top_k_retention(&tm, &sc, 100, passed) >= 0.95 {
            pass95 = pct as f64 / 100.0;
            break;
        }
    }
    Evaluation {
        n: len,
        spearman_s1: spearman(&ts1, &ps1),
        spearman_t1: spearman(&tt1, &pt1),
        spearman_delta_est: spearman(&td, &pd),
        spearman_f: spearman(&tf, &pf),
        spearman_merit: spearman(&tm, &pm),
        spearman_score: spearman(&tm, &sc),
        mae_s1_ev: mae(&ts1, &ps1),
        mae_t1_ev: mae(&tt1, &pt1),
        mae_delta_est_ev: mae(&td, &pd),
        top100_kept_at_10pct: top_k_retention(&tm, &sc, 100, len / 10),
        pass_fraction_for_95pct: pass95,
    }
}
