//! Corrections fitted on imported results: robust linear maps and ridge models, grouped
//! cross-validation, conformal intervals, applicability domain, next-batch suggestion
//! (issue 6).
//!
//! # What is fitted
//!
//! Three targets, each from its own raw π-tier value: S1 (eV), ΔEST (eV) and
//! log10(f + [`F_FLOOR`]). T1 is never fitted: it is derived as S1 − ΔEST from the calibrated
//! values, so the three can never contradict each other.
//!
//! For each target two model families compete:
//!
//! * **robust line** `y = a + b·raw` fitted by Huber M-estimation with iteratively reweighted
//!   least squares ([`robust::huber_line`]; Huber, Ann. Math. Stat. 35, 73–101 (1964);
//!   IRLS after Holland & Welsch, Commun. Stat. 6, 813–827 (1977));
//! * **ridge** on `[raw, descriptors…, fragment counts…]` ([`ridge`]; Hoerl & Kennard,
//!   Technometrics 12, 55–67 (1970)): descriptors standardised, plus one column per fragment key
//!   counting how often the candidate contains it — a Free–Wilson additive model (Free & Wilson,
//!   J. Med. Chem. 7, 395–399 (1964)) shrunk by the ridge penalty. The penalty λ is chosen by an
//!   inner grouped cross-validation on each training fold (nested CV; Varma & Simon, BMC
//!   Bioinformatics 7, 91 (2006)).
//!
//! The family with the smaller grouped-CV mean squared error wins (a tie goes to the robust
//! line, the simpler model). Folds are grouped by fragment key ([`cv::grouped_folds`]), so the
//! reported errors are errors on candidates whose held-out fragment the model never saw.
//!
//! # Intervals
//!
//! The half-width of each target's interval is the ⌈(n+1)(1−α)⌉-th smallest absolute
//! out-of-fold residual (the split-conformal quantile of Vovk, Gammerman & Shafer, *Algorithmic
//! Learning in a Random World* (2005) and Lei et al., JASA 113, 1094–1111 (2018)), with the
//! grouped-CV residuals as the calibration scores; see [`conformal`] for what this does and does
//! not guarantee.
//!
//! # Applicability domain
//!
//! A candidate is `out_of_domain` when one of its fragment keys was never seen in the
//! calibration data, or when a raw value or descriptor lies outside the training range widened
//! by [`CalibrateParams::domain_margin`] × that range on each side. Out-of-domain predictions are
//! **flagged, not widened**: because the residual quantile comes from leave-fragment-out folds,
//! it already describes candidates with an unseen fragment; for descriptor extrapolation there
//! is no honest widening factor, and the flag tells the caller not to trust the interval.
//!
//! Every function here is pure: values in, values out; no files, threads or terminal.

pub mod conformal;
pub mod cv;
pub mod ridge;
pub mod robust;
pub mod suggest;

use serde::{Deserialize, Serialize};
use thiserror::Error;

pub use cv::{Folds, grouped_folds};
pub use robust::{HuberFit, HuberParams, huber_line};
pub use suggest::{PoolCandidate, SuggestParams, suggest};

/// Floor added to the oscillator strength before taking log10 (the crate's dark-state floor,
/// [`crate::photophysics::F_DARK_FLOOR`]), so that f = 0 has a finite target.
pub const F_FLOOR: f64 = crate::photophysics::F_DARK_FLOOR;

/// Fewest observed points for a target below which fitting is refused: two families, an inner
/// CV for λ and a residual quantile cannot be estimated from fewer. With 10 points the 90 %
/// conformal quantile (⌈11·0.9⌉ = 10) is still finite.
pub const MIN_POINTS: usize = 10;

/// Fewest distinct fragment keys (and grouped folds) below which fitting is refused: grouped
/// cross-validation needs at least three groups to say anything about unseen fragments.
pub const MIN_GROUPS: usize = 3;

/// Errors of the calibration layer.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum CalibrateError {
    #[error("no calibration points")]
    Empty,
    #[error(
        "calibration points of different kinds ({}) are never fitted together; fit each kind separately",
        .0.join(", ")
    )]
    MixedKinds(Vec<String>),
    #[error(
        "{target}: only {n} observed point(s), at least {min} are needed to fit and cross-validate"
    )]
    TooFewPoints {
        target: Target,
        n: usize,
        min: usize,
    },
    #[error(
        "{target}: only {n} fragment group(s) usable for grouped cross-validation, at least {min} are needed"
    )]
    TooFewGroups {
        target: Target,
        n: usize,
        min: usize,
    },
    #[error(
        "{target}: coverage {coverage} needs at least {needed} calibration residuals, have {n}"
    )]
    TooFewForCoverage {
        target: String,
        coverage: f64,
        n: usize,
        needed: usize,
    },
    #[error("candidate {candidate}: {field} is not a finite value (or f is negative)")]
    BadValue { candidate: String, field: String },
    #[error("candidate {candidate}: {got} descriptors, expected {expected}")]
    DescriptorLength {
        candidate: String,
        expected: usize,
        got: usize,
    },
    #[error("invalid parameter: {0}")]
    BadParams(String),
    #[error("robust fit: {0}")]
    Degenerate(String),
    #[error("robust fit did not converge in {iterations} iterations")]
    NotConverged { iterations: usize },
    #[error("{target}: no model family could be fitted on every grouped fold")]
    NoFeasibleModel { target: Target },
}

/// One of the three fitted quantities.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Target {
    /// S1 in eV.
    S1,
    /// ΔEST = S1 − T1 in eV.
    DeltaEst,
    /// log10(f + [`F_FLOOR`]).
    Log10F,
}

impl Target {
    pub const ALL: [Target; 3] = [Target::S1, Target::DeltaEst, Target::Log10F];

    fn raw(self, r: &RawValues) -> f64 {
        match self {
            Target::S1 => r.s1_ev,
            Target::DeltaEst => r.delta_est_ev,
            Target::Log10F => r.log10_f,
        }
    }

    fn observed(self, o: &ObservedValues) -> Option<f64> {
        match self {
            Target::S1 => o.s1_ev,
            Target::DeltaEst => o.delta_est_ev,
            Target::Log10F => o.f.map(|f| (f + F_FLOOR).log10()),
        }
    }
}

impl std::fmt::Display for Target {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Target::S1 => "s1_ev",
            Target::DeltaEst => "delta_est_ev",
            Target::Log10F => "log10_f",
        })
    }
}

/// The π-tier (uncalibrated) values of one candidate.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct RawValues {
    pub s1_ev: f64,
    pub delta_est_ev: f64,
    /// log10(f + [`F_FLOOR`]).
    pub log10_f: f64,
}

impl RawValues {
    /// Raw values from S1, ΔEST and f (applies the floor).
    pub fn new(s1_ev: f64, delta_est_ev: f64, f: f64) -> Self {
        RawValues {
            s1_ev,
            delta_est_ev,
            log10_f: (f.max(0.0) + F_FLOOR).log10(),
        }
    }
}

/// Reference values (TD-DFT or measured) of one candidate; any may be missing.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct ObservedValues {
    pub s1_ev: Option<f64>,
    pub delta_est_ev: Option<f64>,
    /// Oscillator strength (≥ 0).
    pub f: Option<f64>,
}

/// One calibration point: a candidate with its raw values, descriptors, fragment keys and the
/// reference values to fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CalPoint {
    pub candidate_id: String,
    /// Fragment ids of the candidate (a key may repeat, e.g. a D–A–D with two equal donors).
    pub groups: Vec<String>,
    pub raw: RawValues,
    /// π-tier descriptors (same length and order for every point and every prediction).
    pub descriptors: Vec<f64>,
    pub observed: ObservedValues,
    /// What the reference is, e.g. "tddft-vertical" or "measured"; kinds are never mixed.
    pub kind: String,
}

/// Settings of [`fit`]; every field has a documented default.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CalibrateParams {
    /// Target coverage 1 − α of the intervals. Default 0.9.
    pub coverage: f64,
    /// Most grouped folds (outer and inner). Default 10.
    pub max_folds: usize,
    /// A fragment key carried by more than this fraction of the points is never held out (it
    /// would leave too little to train on; a key on every point cannot be held out at all).
    /// Default 0.5.
    pub max_fold_fraction: f64,
    /// Ridge penalties tried (on standardised columns). Default 10^-3 … 10^3 in decades.
    pub lambdas: Vec<f64>,
    /// Huber IRLS settings of the robust line.
    pub huber: HuberParams,
    /// Applicability domain: the training range of each raw value and descriptor widened by
    /// this fraction of the range on each side. Default 0.1.
    pub domain_margin: f64,
}

impl Default for CalibrateParams {
    fn default() -> Self {
        CalibrateParams {
            coverage: 0.9,
            max_folds: 10,
            max_fold_fraction: 0.5,
            lambdas: vec![1e-3, 1e-2, 1e-1, 1.0, 1e1, 1e2, 1e3],
            huber: HuberParams::default(),
            domain_margin: 0.1,
        }
    }
}

impl CalibrateParams {
    fn validate(&self) -> Result<(), CalibrateError> {
        let bad = |m: &str| Err(CalibrateError::BadParams(m.to_string()));
        if !(self.coverage > 0.0 && self.coverage < 1.0) {
            return bad("coverage must lie strictly between 0 and 1");
        }
        if self.max_folds < MIN_GROUPS {
            return bad("max_folds must be at least 3");
        }
        if !(self.max_fold_fraction > 0.0 && self.max_fold_fraction <= 1.0) {
            return bad("max_fold_fraction must lie in (0, 1]");
        }
        if self.lambdas.is_empty() || self.lambdas.iter().any(|l| !(l.is_finite() && *l > 0.0)) {
            return bad("lambdas must be a non-empty list of positive numbers");
        }
        if !(self.domain_margin.is_finite() && self.domain_margin >= 0.0) {
            return bad("domain_margin must be a non-negative number");
        }
        self.huber.validate()
    }
}

/// Which family a target's model comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Family {
    RobustLine,
    Ridge,
}

/// A fitted map from a candidate's raw value, descriptors and fragment keys to a target.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub enum Model {
    /// `y = intercept + slope·raw`.
    RobustLine { intercept: f64, slope: f64 },
    /// `y = intercept + raw_coef·raw + Σ descriptor_coefs[j]·d[j] + Σ_keys group_coefs[key]`
    /// (weights in original units; `group_coefs` indexed like [`Calibration::vocabulary`]).
    Ridge {
        lambda: f64,
        intercept: f64,
        raw_coef: f64,
        descriptor_coefs: Vec<f64>,
        group_coefs: Vec<f64>,
    },
}

impl Model {
    /// The model's value for one candidate; `keys` are indices into the vocabulary (unseen keys
    /// already dropped: they contribute nothing).
    fn eval(&self, raw: f64, descriptors: &[f64], keys: &[usize]) -> f64 {
        match self {
            Model::RobustLine { intercept, slope } => intercept + slope * raw,
            Model::Ridge {
                intercept,
                raw_coef,
                descriptor_coefs,
                group_coefs,
                ..
            } => {
                let mut y = intercept + raw_coef * raw;
                for (w, d) in descriptor_coefs.iter().zip(descriptors) {
                    y += w * d;
                }
                for &k in keys {
                    y += group_coefs[k];
                }
                y
            }
        }
    }
}

/// Cross-validated errors: of the out-of-fold predictions against the observations.
/// `r2` and `spearman` are `None` when undefined (constant observations or predictions).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct CvMetrics {
    pub n: usize,
    pub mae: f64,
    pub rmse: f64,
    /// 1 − SS_res / SS_tot of the out-of-fold predictions (may be negative).
    pub r2: Option<f64>,
    /// Spearman rank correlation of out-of-fold predictions and observations.
    pub spearman: Option<f64>,
}

impl CvMetrics {
    /// Metrics of `pred` against `obs` (equal lengths, at least one point).
    pub fn of(obs: &[f64], pred: &[f64]) -> CvMetrics {
        let n = obs.len();
        let nf = n as f64;
        let mae = obs
            .iter()
            .zip(pred)
            .map(|(o, p)| (o - p).abs())
            .sum::<f64>()
            / nf;
        let ss_res: f64 = obs.iter().zip(pred).map(|(o, p)| (o - p).powi(2)).sum();
        let mean = obs.iter().sum::<f64>() / nf;
        let ss_tot: f64 = obs.iter().map(|o| (o - mean).powi(2)).sum();
        let r2 = (ss_tot > 0.0).then(|| 1.0 - ss_res / ss_tot);
        let rho = crate::fast::fit::spearman(obs, pred);
        CvMetrics {
            n,
            mae,
            rmse: (ss_res / nf).sqrt(),
            r2,
            spearman: rho.is_finite().then_some(rho),
        }
    }
}

/// How one target was fitted and how well it cross-validates.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TargetFit {
    pub target: Target,
    /// The chosen model, fitted on all observed points of the target.
    pub model: Model,
    pub family: Family,
    /// Conformal half-width at [`CalibrateParams::coverage`] (target units; for f, in log10).
    pub half_width: f64,
    /// Number of grouped folds used.
    pub n_folds: usize,
    /// Metrics of the chosen family's out-of-fold predictions.
    pub cv: CvMetrics,
    /// Grouped-CV mean squared error of each family (`None`: it failed on some fold).
    pub robust_cv_mse: Option<f64>,
    pub ridge_cv_mse: Option<f64>,
}

/// The derived T1 = S1 − ΔEST: its interval half-width and CV metrics, from the points where
/// both S1 and ΔEST are observed.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DerivedFit {
    pub half_width: f64,
    pub cv: CvMetrics,
}

/// Bounds of the applicability domain (already widened by the margin).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Domain {
    /// [lo, hi] of raw S1, ΔEST, log10 f.
    pub raw_lo: [f64; 3],
    pub raw_hi: [f64; 3],
    pub descriptor_lo: Vec<f64>,
    pub descriptor_hi: Vec<f64>,
}

/// A fitted calibration for one kind of reference data; serialisable to JSON for the store.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Calibration {
    pub kind: String,
    /// The settings it was fitted with.
    pub params: CalibrateParams,
    /// `F_FLOOR` at fit time (the f target is log10(f + floor)).
    pub f_floor: f64,
    pub n_points: usize,
    pub n_descriptors: usize,
    /// Sorted, distinct fragment keys seen in the calibration data.
    pub vocabulary: Vec<String>,
    pub domain: Domain,
    /// Each target's fit; `None` when its data were too few (see `skipped`).
    pub s1: Option<TargetFit>,
    pub delta_est: Option<TargetFit>,
    pub log10_f: Option<TargetFit>,
    /// T1 = S1 − ΔEST, when both are fitted.
    pub t1: Option<DerivedFit>,
    /// Targets left unfitted and why (e.g. measured data without oscillator strengths).
    pub skipped: Vec<String>,
}

/// A calibrated value with its interval.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Interval {
    pub value: f64,
    pub lo: f64,
    pub hi: f64,
}

/// Calibrated S1, ΔEST, T1 (= S1 − ΔEST exactly) and f of one candidate; `None` for a target
/// the calibration could not fit (the raw value stands, without an interval).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Calibrated {
    pub s1_ev: Option<Interval>,
    pub delta_est_ev: Option<Interval>,
    /// Present when both S1 and ΔEST are calibrated.
    pub t1_ev: Option<Interval>,
    /// Oscillator strength (value and bounds clamped at 0).
    pub f: Option<Interval>,
    /// Outside the applicability domain (see the module docs): flagged, not widened.
    pub out_of_domain: bool,
}

/// Fit each kind found in `points` separately (a convenience over [`fit`]).
pub fn fit_each_kind(
    points: &[CalPoint],
    params: &CalibrateParams,
) -> std::collections::BTreeMap<String, Result<Calibration, CalibrateError>> {
    let mut by_kind: std::collections::BTreeMap<String, Vec<CalPoint>> = Default::default();
    for p in points {
        by_kind.entry(p.kind.clone()).or_default().push(p.clone());
    }
    by_kind
        .into_iter()
        .map(|(k, v)| {
            let r = fit(&v, params);
            (k, r)
        })
        .collect()
}

/// Fit a calibration on points of a single kind.
///
/// A target (S1, ΔEST, log10 f) is fitted when it has at least [`MIN_POINTS`] observed points
/// spanning at least [`MIN_GROUPS`] usable fragment keys; the others are skipped with their
/// reason (`Calibration::skipped`), and no target fitted is an error. Points of more than one
/// `kind` are refused.
///
/// Cost: O(F² · L · n · p²) for F folds, L penalties, n points and p ridge columns (nested CV);
/// about 70 ms for 120 points (`cargo bench --bench calibrate`).
pub fn fit(points: &[CalPoint], params: &CalibrateParams) -> Result<Calibration, CalibrateError> {
    params.validate()?;
    let first = points.first().ok_or(CalibrateError::Empty)?;
    let mut kinds: Vec<String> = points.iter().map(|p| p.kind.clone()).collect();
    kinds.sort();
    kinds.dedup();
    if kinds.len() > 1 {
        return Err(CalibrateError::MixedKinds(kinds));
    }
    let nd = first.descriptors.len();
    for p in points {
        let bad = |field: &str| CalibrateError::BadValue {
            candidate: p.candidate_id.clone(),
            field: field.to_string(),
        };
        if p.descriptors.len() != nd {
            return Err(CalibrateError::DescriptorLength {
                candidate: p.candidate_id.clone(),
                expected: nd,
                got: p.descriptors.len(),
            });
        }
        for t in Target::ALL {
            if !t.raw(&p.raw).is_finite() {
                return Err(bad(&format!("raw {t}")));
            }
        }
        if p.descriptors.iter().any(|d| !d.is_finite()) {
            return Err(bad("a descriptor"));
        }
        let o = &p.observed;
        if o.s1_ev.is_some_and(|v| !v.is_finite()) {
            return Err(bad("observed s1_ev"));
        }
        if o.delta_est_ev.is_some_and(|v| !v.is_finite()) {
            return Err(bad("observed delta_est_ev"));
        }
        if o.f.is_some_and(|v| !(v.is_finite() && v >= 0.0)) {
            return Err(bad("observed f"));
        }
    }

    let mut vocabulary: Vec<String> = points.iter().flat_map(|p| p.groups.clone()).collect();
    vocabulary.sort();
    vocabulary.dedup();
    let domain = domain_of(points, nd, params.domain_margin);

    // Each target on its own; a target with too little data is skipped with its reason (the
    // others still calibrate), any other failure stops the fit. Nothing fitted: the first
    // reason is the error.
    let mut skipped = Vec::new();
    let mut first_err = None;
    let mut outcomes = Vec::with_capacity(3);
    for t in Target::ALL {
        match fit_target(points, t, &vocabulary, params) {
            Ok(o) => outcomes.push(Some(o)),
            Err(
                e @ (CalibrateError::TooFewPoints { .. }
                | CalibrateError::TooFewGroups { .. }
                | CalibrateError::TooFewForCoverage { .. }),
            ) => {
                skipped.push(e.to_string());
                first_err.get_or_insert(e);
                outcomes.push(None);
            }
            Err(e) => return Err(e),
        }
    }
    if outcomes.iter().all(Option::is_none) {
        return Err(first_err.expect("a reason per target"));
    }
    let mut outcomes = outcomes.into_iter();
    let (s1, dest, lf) = (
        outcomes.next().expect("three targets"),
        outcomes.next().expect("three targets"),
        outcomes.next().expect("three targets"),
    );

    // T1 = S1 − ΔEST: out-of-fold residual of the difference where both are observed.
    let t1 = match (&s1, &dest) {
        (Some(s1), Some(dest)) => {
            let mut obs_t1 = Vec::new();
            let mut pred_t1 = Vec::new();
            for (i, p) in points.iter().enumerate() {
                if let (Some(a), Some(b), Some(pa), Some(pb)) = (
                    p.observed.s1_ev,
                    p.observed.delta_est_ev,
                    s1.oof.get(&i),
                    dest.oof.get(&i),
                ) {
                    obs_t1.push(a - b);
                    pred_t1.push(pa - pb);
                }
            }
            let res: Vec<f64> = obs_t1.iter().zip(&pred_t1).map(|(o, p)| o - p).collect();
            match conformal::half_width(&res, params.coverage) {
                Some(h) => Some(DerivedFit {
                    half_width: h,
                    cv: CvMetrics::of(&obs_t1, &pred_t1),
                }),
                None => {
                    skipped.push(
                        CalibrateError::TooFewForCoverage {
                            target: "t1_ev".into(),
                            coverage: params.coverage,
                            n: res.len(),
                            needed: conformal::needed(params.coverage),
                        }
                        .to_string(),
                    );
                    None
                }
            }
        }
        _ => None,
    };

    Ok(Calibration {
        kind: first.kind.clone(),
        params: params.clone(),
        f_floor: F_FLOOR,
        n_points: points.len(),
        n_descriptors: nd,
        vocabulary,
        domain,
        s1: s1.map(|o| o.fit),
        delta_est: dest.map(|o| o.fit),
        log10_f: lf.map(|o| o.fit),
        t1,
        skipped,
    })
}

fn domain_of(points: &[CalPoint], nd: usize, margin: f64) -> Domain {
    let widen = |lo: f64, hi: f64| {
        let m = margin * (hi - lo);
        (lo - m, hi + m)
    };
    let mut raw_lo = [0.0; 3];
    let mut raw_hi = [0.0; 3];
    for (k, t) in Target::ALL.iter().enumerate() {
        let lo = points
            .iter()
            .map(|p| t.raw(&p.raw))
            .fold(f64::INFINITY, f64::min);
        let hi = points
            .iter()
            .map(|p| t.raw(&p.raw))
            .fold(f64::NEG_INFINITY, f64::max);
        (raw_lo[k], raw_hi[k]) = widen(lo, hi);
    }
    let mut descriptor_lo = Vec::with_capacity(nd);
    let mut descriptor_hi = Vec::with_capacity(nd);
    for j in 0..nd {
        let lo = points
            .iter()
            .map(|p| p.descriptors[j])
            .fold(f64::INFINITY, f64::min);
        let hi = points
            .iter()
            .map(|p| p.descriptors[j])
            .fold(f64::NEG_INFINITY, f64::max);
        let (a, b) = widen(lo, hi);
        descriptor_lo.push(a);
        descriptor_hi.push(b);
    }
    Domain {
        raw_lo,
        raw_hi,
        descriptor_lo,
        descriptor_hi,
    }
}

/// A target's fit plus its out-of-fold predictions by point index (for T1).
struct TargetOutcome {
    fit: TargetFit,
    oof: std::collections::HashMap<usize, f64>,
}

fn fit_target(
    points: &[CalPoint],
    t: Target,
    vocabulary: &[String],
    params: &CalibrateParams,
) -> Result<TargetOutcome, CalibrateError> {
    let idx: Vec<usize> = (0..points.len())
        .filter(|&i| t.observed(&points[i].observed).is_some())
        .collect();
    let n = idx.len();
    if n < MIN_POINTS {
        return Err(CalibrateError::TooFewPoints {
            target: t,
            n,
            min: MIN_POINTS,
        });
    }
    let groups: Vec<&[String]> = idx.iter().map(|&i| points[i].groups.as_slice()).collect();
    let mut distinct: Vec<&String> = groups.iter().flat_map(|g| g.iter()).collect();
    distinct.sort();
    distinct.dedup();
    if distinct.len() < MIN_GROUPS {
        return Err(CalibrateError::TooFewGroups {
            target: t,
            n: distinct.len(),
            min: MIN_GROUPS,
        });
    }
    let folds = grouped_folds(&groups, params.max_folds, params.max_fold_fraction);
    if folds.len() < MIN_GROUPS {
        return Err(CalibrateError::TooFewGroups {
            target: t,
            n: folds.len(),
            min: MIN_GROUPS,
        });
    }
    let y: Vec<f64> = idx
        .iter()
        .map(|&i| t.observed(&points[i].observed).expect("filtered"))
        .collect();
    let raw: Vec<f64> = idx.iter().map(|&i| t.raw(&points[i].raw)).collect();
    let rows: Vec<Vec<f64>> = idx
        .iter()
        .map(|&i| ridge::design_row(t.raw(&points[i].raw), &points[i], vocabulary))
        .collect();

    // Family (a): robust line, out-of-fold.
    let robust_oof = cv::cross_predict(&folds, n, |train, test| {
        let xs: Vec<f64> = train.iter().map(|&i| raw[i]).collect();
        let ys: Vec<f64> = train.iter().map(|&i| y[i]).collect();
        let f = huber_line(&xs, &ys, &params.huber)?;
        Ok(test
            .iter()
            .map(|&i| f.intercept + f.slope * raw[i])
            .collect())
    })
    .ok();
    // Family (b): ridge with λ chosen by inner grouped CV on each training fold.
    let ridge_oof = cv::cross_predict(&folds, n, |train, test| {
        let sub_rows: Vec<Vec<f64>> = train.iter().map(|&i| rows[i].clone()).collect();
        let sub_y: Vec<f64> = train.iter().map(|&i| y[i]).collect();
        let sub_groups: Vec<&[String]> = train.iter().map(|&i| groups[i]).collect();
        let lambda = ridge::choose_lambda(&sub_rows, &sub_y, &sub_groups, params);
        let w = ridge::fit_ridge(&sub_rows, &sub_y, lambda)?;
        Ok(test.iter().map(|&i| ridge::dot(&w, &rows[i])).collect())
    })
    .ok();
    let mse = |p: &Vec<f64>| y.iter().zip(p).map(|(a, b)| (a - b).powi(2)).sum::<f64>() / n as f64;
    let robust_cv_mse = robust_oof.as_ref().map(mse);
    let ridge_cv_mse = ridge_oof.as_ref().map(mse);
    let family = match (robust_cv_mse, ridge_cv_mse) {
        (Some(a), Some(b)) if b < a => Family::Ridge,
        (Some(_), _) => Family::RobustLine,
        (None, Some(_)) => Family::Ridge,
        (None, None) => return Err(CalibrateError::NoFeasibleModel { target: t }),
    };
    let (model, oof) = match family {
        Family::RobustLine => {
            let f = huber_line(&raw, &y, &params.huber)?;
            (
                Model::RobustLine {
                    intercept: f.intercept,
                    slope: f.slope,
                },
                robust_oof.expect("chosen family has predictions"),
            )
        }
        Family::Ridge => {
            // λ by grouped CV over the outer folds on all points, then refit on all.
            let lambda = ridge::choose_lambda_on(&rows, &y, &folds, params);
            let w = ridge::fit_ridge(&rows, &y, lambda)?;
            let nd = points[0].descriptors.len();
            (
                Model::Ridge {
                    lambda,
                    intercept: w[0],
                    raw_coef: w[1],
                    descriptor_coefs: w[2..2 + nd].to_vec(),
                    group_coefs: w[2 + nd..].to_vec(),
                },
                ridge_oof.expect("chosen family has predictions"),
            )
        }
    };
    let residuals: Vec<f64> = y.iter().zip(&oof).map(|(a, b)| a - b).collect();
    let half_width = conformal::half_width(&residuals, params.coverage).ok_or_else(|| {
        CalibrateError::TooFewForCoverage {
            target: t.to_string(),
            coverage: params.coverage,
            n,
            needed: conformal::needed(params.coverage),
        }
    })?;
    Ok(TargetOutcome {
        fit: TargetFit {
            target: t,
            model,
            family,
            half_width,
            n_folds: folds.len(),
            cv: CvMetrics::of(&y, &oof),
            robust_cv_mse,
            ridge_cv_mse,
        },
        oof: idx.iter().copied().zip(oof).collect(),
    })
}

impl Calibration {
    /// Calibrated S1, ΔEST, T1 and f with intervals for one candidate.
    ///
    /// T1 = S1 − ΔEST exactly (value); its interval half-width is the conformal quantile of the
    /// out-of-fold T1 residuals. f = max(10^y − floor, 0) with the interval mapped through the
    /// same monotone transform. `groups` not in the vocabulary contribute nothing and set
    /// `out_of_domain`. No allocation for up to 8 fragment keys; about 5·10^6 candidates/s on
    /// one core (`cargo bench --bench calibrate`).
    ///
    /// # Errors
    /// [`CalibrateError::DescriptorLength`] when `descriptors` has the wrong length.
    pub fn predict<S: AsRef<str>>(
        &self,
        raw: &RawValues,
        descriptors: &[f64],
        groups: &[S],
    ) -> Result<Calibrated, CalibrateError> {
        if descriptors.len() != self.n_descriptors {
            return Err(CalibrateError::DescriptorLength {
                candidate: "(to predict)".into(),
                expected: self.n_descriptors,
                got: descriptors.len(),
            });
        }
        let mut ood = false;
        let mut stack = [0usize; 8];
        let mut heap = Vec::new();
        let mut m = 0;
        for g in groups {
            match self
                .vocabulary
                .binary_search_by(|v| v.as_str().cmp(g.as_ref()))
            {
                Ok(k) => {
                    if m < stack.len() {
                        stack[m] = k;
                        m += 1;
                    } else {
                        if heap.is_empty() {
                            heap.extend_from_slice(&stack);
                        }
                        heap.push(k);
                    }
                }
                Err(_) => ood = true,
            }
        }
        let keys: &[usize] = if heap.is_empty() { &stack[..m] } else { &heap };
        let d = &self.domain;
        for (k, t) in Target::ALL.iter().enumerate() {
            let v = t.raw(raw);
            // Written so that NaN is out of domain.
            if !(v >= d.raw_lo[k] && v <= d.raw_hi[k]) {
                ood = true;
            }
        }
        for (j, &v) in descriptors.iter().enumerate() {
            if !(v >= d.descriptor_lo[j] && v <= d.descriptor_hi[j]) {
                ood = true;
            }
        }
        let band = |fit: &Option<TargetFit>, raw: f64| {
            fit.as_ref().map(|fit| {
                let v = fit.model.eval(raw, descriptors, keys);
                Interval {
                    value: v,
                    lo: v - fit.half_width,
                    hi: v + fit.half_width,
                }
            })
        };
        let s1 = band(&self.s1, raw.s1_ev);
        let dest = band(&self.delta_est, raw.delta_est_ev);
        let lf = band(&self.log10_f, raw.log10_f);
        let t1 = match (s1, dest, &self.t1) {
            (Some(s1), Some(dest), Some(t1)) => {
                let v = s1.value - dest.value;
                Some(Interval {
                    value: v,
                    lo: v - t1.half_width,
                    hi: v + t1.half_width,
                })
            }
            _ => None,
        };
        let to_f = |y: f64| (10f64.powf(y) - self.f_floor).max(0.0);
        Ok(Calibrated {
            s1_ev: s1,
            delta_est_ev: dest,
            t1_ev: t1,
            f: lf.map(|lf| Interval {
                value: to_f(lf.value),
                lo: to_f(lf.lo),
                hi: to_f(lf.hi),
            }),
            out_of_domain: ood,
        })
    }

    /// The fitted record of one target.
    pub fn target(&self, t: Target) -> Option<&TargetFit> {
        match t {
            Target::S1 => self.s1.as_ref(),
            Target::DeltaEst => self.delta_est.as_ref(),
            Target::Log10F => self.log10_f.as_ref(),
        }
    }
}
