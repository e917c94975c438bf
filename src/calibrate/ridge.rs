//! Ridge regression on descriptors plus fragment identities (a penalised Free–Wilson model).
//!
//! Ridge: Hoerl & Kennard, Technometrics 12, 55–67 (1970): minimise ‖y − Xw‖² + λ‖w‖² over the
//! non-constant columns, each standardised to unit variance first (the solver is
//! [`crate::fast::fit::ridge`], shared with the fast tier). Free–Wilson additivity: Free &
//! Wilson, J. Med. Chem. 7, 395–399 (1964) — each fragment contributes a constant term; here
//! one column per fragment key counts its occurrences in the candidate. Because every column is
//! standardised, the penalty on a rare fragment's term in original units is smaller than on a
//! common one's (λ·sd²·w²); this is the usual convention (as in glmnet) and keeps λ meaningful
//! whatever the mix of columns.
//!
//! λ is chosen from a grid by grouped cross-validation ([`choose_lambda`]).

use super::cv::{cross_predict, grouped_folds};
use super::{CalPoint, CalibrateError, CalibrateParams, Folds, MIN_GROUPS};

/// The ridge design row of one point: `[1, raw, descriptors…, count of each vocabulary key]`.
pub fn design_row(raw: f64, point: &CalPoint, vocabulary: &[String]) -> Vec<f64> {
    let mut row = Vec::with_capacity(2 + point.descriptors.len() + vocabulary.len());
    row.push(1.0);
    row.push(raw);
    row.extend_from_slice(&point.descriptors);
    let start = row.len();
    row.resize(start + vocabulary.len(), 0.0);
    for g in &point.groups {
        if let Ok(k) = vocabulary.binary_search(g) {
            row[start + k] += 1.0;
        }
    }
    row
}

/// Ridge weights (original units, `w[0]` the unpenalised intercept) for `rows` whose first
/// column is the constant 1.
///
/// # Errors
/// [`CalibrateError::Degenerate`] when the penalised normal equations are not positive definite
/// (λ ≤ 0 with too few rows, or empty input).
pub fn fit_ridge(rows: &[Vec<f64>], y: &[f64], lambda: f64) -> Result<Vec<f64>, CalibrateError> {
    crate::fast::fit::ridge(rows, y, lambda).ok_or_else(|| {
        CalibrateError::Degenerate(format!(
            "ridge with λ = {lambda} on {} rows has no unique solution",
            rows.len()
        ))
    })
}

/// `w · row`.
pub fn dot(w: &[f64], row: &[f64]) -> f64 {
    w.iter().zip(row).map(|(a, b)| a * b).sum()
}

/// The λ of `params.lambdas` with the smallest grouped-CV mean squared error over `folds`
/// (ties: the earlier in the list). A λ whose fit fails on some fold is never chosen; if all
/// fail, the middle of the grid.
pub fn choose_lambda_on(
    rows: &[Vec<f64>],
    y: &[f64],
    folds: &Folds,
    params: &CalibrateParams,
) -> f64 {
    let mut best = (f64::INFINITY, params.lambdas[params.lambdas.len() / 2]);
    for &lambda in &params.lambdas {
        let pred = cross_predict(folds, rows.len(), |train, test| {
            let r: Vec<Vec<f64>> = train.iter().map(|&i| rows[i].clone()).collect();
            let t: Vec<f64> = train.iter().map(|&i| y[i]).collect();
            let w = fit_ridge(&r, &t, lambda)?;
            Ok(test.iter().map(|&i| dot(&w, &rows[i])).collect())
        });
        if let Ok(p) = pred {
            let mse = y.iter().zip(&p).map(|(a, b)| (a - b).powi(2)).sum::<f64>() / y.len() as f64;
            if mse < best.0 {
                best = (mse, lambda);
            }
        }
    }
    best.1
}

/// λ by grouped CV on a training set (the inner loop of nested CV): folds built from `groups`
/// with the same settings as the outer loop. With fewer than [`MIN_GROUPS`] inner folds, the
/// middle of the grid.
pub fn choose_lambda<G, S>(
    rows: &[Vec<f64>],
    y: &[f64],
    groups: &[G],
    params: &CalibrateParams,
) -> f64
where
    G: AsRef<[S]>,
    S: AsRef<str>,
{
    let folds = grouped_folds(groups, params.max_folds, params.max_fold_fraction);
    if folds.len() < MIN_GROUPS {
        return params.lambdas[params.lambdas.len() / 2];
    }
    choose_lambda_on(rows, y, &folds, params)
}
