//! Conformal interval half-widths from residuals.
//!
//! Split conformal prediction (Vovk, Gammerman & Shafer, *Algorithmic Learning in a Random
//! World*, Springer 2005; Lei, G'Sell, Rinaldo, Tibshirani & Wasserman, "Distribution-free
//! predictive inference for regression", JASA 113, 1094–1111 (2018)): with n calibration
//! residuals R_i = |y_i − ŷ_i| from a model that did not see them, the interval
//! ŷ(x) ± q, q = the k-th smallest R_i with k = ⌈(n+1)(1−α)⌉, covers a new exchangeable point
//! with probability ≥ 1 − α. If k > n the interval is unbounded.
//!
//! How it is used here: the calibration residuals are the out-of-fold residuals of the grouped
//! cross-validation, and the interval is centred on the model refitted on all points. Every
//! point serves as a calibration point (no data are set aside), at the price of the
//! finite-sample guarantee: this is the "CV" interval discussed by Barber, Candès, Ramdas &
//! Tibshirani, "Predictive inference with the jackknife+", Ann. Stat. 49, 486–507 (2021), which
//! covers close to 1 − α when the fold models are stable but has no worst-case guarantee (their
//! CV+ has 1 − 2α). Because the folds hold out whole fragments, the residuals are those of
//! candidates with an unseen fragment: for candidates whose fragments were all seen, the
//! intervals are conservative (cover more than 1 − α).

/// The conformal rank k = ⌈(n+1)·coverage⌉ for `n` residuals.
pub fn rank(n: usize, coverage: f64) -> usize {
    // The small subtraction keeps exact products such as 10·0.9 from rounding up.
    ((n as f64 + 1.0) * coverage - 1e-9).ceil().max(1.0) as usize
}

/// The fewest residuals for which the quantile at `coverage` is finite.
pub fn needed(coverage: f64) -> usize {
    let mut n = 1;
    while rank(n, coverage) > n {
        n += 1;
    }
    n
}

/// Half-width: the ⌈(n+1)·coverage⌉-th smallest absolute residual, `None` when that rank
/// exceeds n (the interval would be unbounded) or a residual is not finite.
pub fn half_width(residuals: &[f64], coverage: f64) -> Option<f64> {
    let n = residuals.len();
    let k = rank(n, coverage);
    if n == 0 || k > n || residuals.iter().any(|r| !r.is_finite()) {
        return None;
    }
    let mut a: Vec<f64> = residuals.iter().map(|r| r.abs()).collect();
    let (_, kth, _) = a.select_nth_unstable_by(k - 1, f64::total_cmp);
    Some(*kth)
}
