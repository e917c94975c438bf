//! Ranking: hard filters with reason codes, Pareto sorting with crowding distance, desirability
//! scores, diversity picking.
//!
//! Pure functions over plain rows ([`Scored`]); no files, threads or terminal. The driver turns
//! stored estimates into rows, calls [`rank`], computes fingerprints of the best rows and calls
//! [`diversity::pick_diverse`].
//!
//! # Stages and the choices behind them
//!
//! 1. **Filters** ([`filter`]): each filter gives the probability that the candidate passes it.
//!    A value with a calibration interval or σ is a two-piece normal distribution around its
//!    point value (see [`Uncertain`]); an exact value passes with probability 0 or 1. The
//!    filters are taken as independent, so the probability of passing all is the product
//!    P = Π P_i. A candidate is kept when P ≥ `RankParams::p_min` (default 0.5: more likely than
//!    not to pass everything) and no filter fails with certainty (P_i = 0). Every filter whose own P_i is below `p_min` is recorded with its
//!    reason code, not just the first; when each passes alone but the product does not, the
//!    reason is `joint_probability_below_threshold`.
//! 2. **Pessimistic values for ordering.** Pareto sorting and desirability use, for each
//!    quantity, the bound at one-sided confidence `RankParams::confidence` (default 0.90,
//!    z = 1.2816) on the unfavourable side: the lower bound of a quantity to be maximised, the
//!    upper bound of one to be minimised; for a two-sided desirability the smaller of d at the
//!    two bounds (a unimodal d takes its minimum over an interval at an end point). An exact
//!    value is its own bound. So a candidate with a wide interval ranks below one with the same
//!    point value and a narrow interval.
//! 3. **Pareto fronts** ([`pareto`]): non-dominated sorting over the listed objectives (each
//!    with a direction); crowding distance within each front (Deb et al. 2002).
//! 4. **Desirability** ([`desirability`]): Derringer–Suich functions and their weighted
//!    geometric mean, with the ΔEST reward capped (`DELTA_EST_CAP_EV`).
//! 5. **Order**: front (ascending), then overall desirability (descending), then crowding
//!    distance (descending), then row index: deterministic for any input order of equal rows
//!    only up to that last key, which is the caller's row order.
//! 6. **Diversity** ([`diversity`]): MaxMin picking on fingerprints from the best-ranked row,
//!    with a similarity ceiling and a cap per fragment id.
//!
//! # When not to trust it
//!
//! The product rule assumes independent errors; errors of S1, T1 and ΔEST from one model are
//! correlated, so P is optimistic where several filters bind at once. The normal
//! approximation of a conformal interval is a convenience, not a property of the interval.
//! Colour and molecular weight are treated as exact.

pub mod desirability;
pub mod diversity;
pub mod filter;
pub mod pareto;

use serde::{Deserialize, Serialize};

pub use desirability::{DELTA_EST_CAP_EV, DesirabilityFn, DesirabilityTerm, overall_desirability};
pub use diversity::{DiversityParams, Pick, PickInput, Picks, StopReason, pick_diverse};
pub use filter::{Filters, Reason, Rejection};
pub use pareto::{crowding_distance, non_dominated_sort};

/// A value with an optional spread: a two-piece normal distribution whose median is `value`,
/// with standard deviation `sigma_lo` below it and `sigma_hi` above it (0 = exact on that
/// side). A symmetric σ gives the ordinary normal distribution.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Uncertain {
    pub value: f64,
    pub sigma_lo: f64,
    pub sigma_hi: f64,
}

impl Uncertain {
    /// An exact value.
    pub fn exact(value: f64) -> Self {
        Uncertain {
            value,
            sigma_lo: 0.0,
            sigma_hi: 0.0,
        }
    }

    /// A normal distribution with standard deviation `sigma` (negative or NaN is taken as 0).
    pub fn with_sigma(value: f64, sigma: f64) -> Self {
        let s = if sigma > 0.0 { sigma } else { 0.0 };
        Uncertain {
            value,
            sigma_lo: s,
            sigma_hi: s,
        }
    }

    /// From a central prediction interval `[lo, hi]` at coverage `level` (e.g. 0.9 from a
    /// split-conformal calibration): each side's σ is its half-width over z = Φ⁻¹((1+level)/2).
    /// An asymmetric interval gives a two-piece normal.
    pub fn from_interval(value: f64, lo: f64, hi: f64, level: f64) -> Result<Self, String> {
        if !(level > 0.0 && level < 1.0) {
            return Err(format!("interval level {level} is not in (0, 1)"));
        }
        if !(lo <= value && value <= hi) {
            return Err(format!(
                "interval [{lo}, {hi}] does not contain its value {value}"
            ));
        }
        let z = normal_quantile(0.5 * (1.0 + level));
        Ok(Uncertain {
            value,
            sigma_lo: (value - lo) / z,
            sigma_hi: (hi - value) / z,
        })
    }

    /// P(X ≤ t).
    pub fn prob_at_most(&self, t: f64) -> f64 {
        if t < self.value {
            side_cdf(t - self.value, self.sigma_lo, 0.0)
        } else {
            side_cdf(t - self.value, self.sigma_hi, 1.0)
        }
    }

    /// P(X < t) (differs from [`prob_at_most`](Self::prob_at_most) only at an exact value).
    pub fn prob_below(&self, t: f64) -> f64 {
        if t <= self.value {
            side_cdf(t - self.value, self.sigma_lo, 0.0)
        } else {
            side_cdf(t - self.value, self.sigma_hi, 1.0)
        }
    }

    /// P(X ≥ t).
    pub fn prob_at_least(&self, t: f64) -> f64 {
        1.0 - self.prob_below(t)
    }

    /// The value `z` standard deviations below the median (the lower confidence bound).
    pub fn lower(&self, z: f64) -> f64 {
        self.value - z * self.sigma_lo
    }

    /// The value `z` standard deviations above the median (the upper confidence bound).
    pub fn upper(&self, z: f64) -> f64 {
        self.value + z * self.sigma_hi
    }

    /// The distribution of −X.
    pub fn negated(&self) -> Self {
        Uncertain {
            value: -self.value,
            sigma_lo: self.sigma_hi,
            sigma_hi: self.sigma_lo,
        }
    }
}

/// Φ(d/σ) for σ > 0; `exact` (the step's value) for σ = 0.
fn side_cdf(d: f64, sigma: f64, exact: f64) -> f64 {
    if sigma > 0.0 {
        normal_cdf(d / sigma)
    } else {
        exact
    }
}

/// Complementary error function, fractional error below 1.2·10⁻⁷ everywhere (Chebyshev fit
/// "erfcc" of Press, Teukolsky, Vetterling & Flannery, *Numerical Recipes*, 2nd ed., §6.2).
pub fn erfc(x: f64) -> f64 {
    let z = x.abs();
    let t = 1.0 / (1.0 + 0.5 * z);
    let poly = -z * z - 1.265_512_23
        + t * (1.000_023_68
            + t * (0.374_091_96
                + t * (0.096_784_18
                    + t * (-0.186_288_06
                        + t * (0.278_868_07
                            + t * (-1.135_203_98
                                + t * (1.488_515_87 + t * (-0.822_152_23 + t * 0.170_872_77))))))));
    let ans = t * poly.exp();
    if x >= 0.0 { ans } else { 2.0 - ans }
}

/// Standard normal cumulative distribution Φ(x) = ½ erfc(−x/√2).
pub fn normal_cdf(x: f64) -> f64 {
    0.5 * erfc(-x / std::f64::consts::SQRT_2)
}

/// Φ⁻¹(p) for p in (0, 1), by bisection on [`normal_cdf`] (to its accuracy); ±∞ at 0 and 1.
pub fn normal_quantile(p: f64) -> f64 {
    if p <= 0.0 {
        return f64::NEG_INFINITY;
    }
    if p >= 1.0 {
        return f64::INFINITY;
    }
    let (mut lo, mut hi) = (-40.0f64, 40.0f64);
    for _ in 0..100 {
        let mid = 0.5 * (lo + hi);
        if normal_cdf(mid) < p {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// A quantity of a row that objectives and desirability terms can name. The serde names are
/// the row's field names.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Quantity {
    S1Ev,
    T1Ev,
    DeltaEstEv,
    OscStrength,
    KRPerS,
    KRiscPerS,
    /// S1 − lowest local triplet (eV, as the estimate records it).
    S1Minus3leEv,
    MolWeight,
    /// u′v′ distance of the emission colour to the filters' colour target.
    DeltaUv,
}

impl Quantity {
    pub fn as_str(self) -> &'static str {
        match self {
            Quantity::S1Ev => "s1_ev",
            Quantity::T1Ev => "t1_ev",
            Quantity::DeltaEstEv => "delta_est_ev",
            Quantity::OscStrength => "osc_strength",
            Quantity::KRPerS => "k_r_per_s",
            Quantity::KRiscPerS => "k_risc_per_s",
            Quantity::S1Minus3leEv => "s1_minus_3le_ev",
            Quantity::MolWeight => "mol_weight",
            Quantity::DeltaUv => "delta_uv",
        }
    }
}

/// One candidate's values as ranking sees them (a plain row; `None` = not available).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct Scored {
    pub candidate_id: String,
    pub s1_ev: Option<Uncertain>,
    pub t1_ev: Option<Uncertain>,
    pub delta_est_ev: Option<Uncertain>,
    pub osc_strength: Option<Uncertain>,
    pub k_r_per_s: Option<Uncertain>,
    pub k_risc_per_s: Option<Uncertain>,
    /// S1 − lowest ³LE (eV); ³LE − ¹CT is its negative (S1 taken as the ¹CT state).
    pub s1_minus_3le_ev: Option<Uncertain>,
    /// Average molecular weight (g/mol).
    pub mol_weight: Option<f64>,
    /// CIE 1931 chromaticity (x, y) of the estimated emission.
    pub cie_xy: Option<(f64, f64)>,
    /// True when the estimate's SCF (or another iteration) did not converge.
    pub not_converged: bool,
    /// The estimate's warnings (carried through, not interpreted).
    pub flags: Vec<String>,
    /// Fragment ids of the candidate (provenance), for the per-fragment cap of the shortlist.
    pub fragment_ids: Vec<String>,
}

impl Scored {
    /// The distribution of a quantity; `colour_target` is needed for [`Quantity::DeltaUv`].
    pub fn get(&self, q: Quantity, colour_target: Option<(f64, f64)>) -> Option<Uncertain> {
        match q {
            Quantity::S1Ev => self.s1_ev,
            Quantity::T1Ev => self.t1_ev,
            Quantity::DeltaEstEv => self.delta_est_ev,
            Quantity::OscStrength => self.osc_strength,
            Quantity::KRPerS => self.k_r_per_s,
            Quantity::KRiscPerS => self.k_risc_per_s,
            Quantity::S1Minus3leEv => self.s1_minus_3le_ev,
            Quantity::MolWeight => self.mol_weight.map(Uncertain::exact),
            Quantity::DeltaUv => match (self.cie_xy, colour_target) {
                (Some(xy), Some(t)) => Some(Uncertain::exact(crate::colour::delta_uv(xy, t))),
                _ => None,
            },
        }
    }
}

/// Whether an objective is to be made small or large.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    Minimise,
    Maximise,
}

/// One Pareto objective.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Objective {
    pub quantity: Quantity,
    pub direction: Direction,
    /// Compare log10 of the value (for rates and oscillator strengths spanning decades).
    #[serde(default)]
    pub log10: bool,
}

/// Settings of [`rank`]. Defaults: the default filters, `p_min` 0.5, `confidence` 0.90,
/// objectives (ΔEST minimised, log10 f maximised), desirability [`DesirabilityTerm::defaults`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct RankParams {
    pub filters: Filters,
    /// Keep a row when its probability of passing all filters is at least this.
    pub p_min: f64,
    /// One-sided confidence of the pessimistic bounds used for ordering (0.5 = point values).
    pub confidence: f64,
    pub objectives: Vec<Objective>,
    pub desirability: Vec<DesirabilityTerm>,
}

impl Default for RankParams {
    fn default() -> Self {
        RankParams {
            filters: Filters::default(),
            p_min: 0.5,
            confidence: 0.90,
            objectives: vec![
                Objective {
                    quantity: Quantity::DeltaEstEv,
                    direction: Direction::Minimise,
                    log10: false,
                },
                Objective {
                    quantity: Quantity::OscStrength,
                    direction: Direction::Maximise,
                    log10: true,
                },
            ],
            desirability: DesirabilityTerm::defaults(),
        }
    }
}

impl RankParams {
    /// Check every setting; the error names the offending key.
    pub fn validate(&self) -> Result<(), String> {
        if !(self.p_min >= 0.0 && self.p_min <= 1.0) {
            return Err(format!("p_min = {} is not in [0, 1]", self.p_min));
        }
        if !(self.confidence >= 0.5 && self.confidence < 1.0) {
            return Err(format!(
                "confidence = {} is not in [0.5, 1)",
                self.confidence
            ));
        }
        self.filters.resolve()?;
        for t in &self.desirability {
            t.validate()?;
        }
        Ok(())
    }
}

/// Ranking of one row.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RankedRow {
    /// Index of the row in the input.
    pub row: usize,
    /// Probability of passing all filters (product of the per-filter probabilities).
    pub pass_probability: f64,
    pub kept: bool,
    /// Every filter the row fails (empty when kept).
    pub rejections: Vec<Rejection>,
    /// Pareto front (0 = non-dominated) among kept rows.
    pub front: Option<u32>,
    pub crowding: Option<f64>,
    /// Overall desirability D in [0, 1] (kept rows).
    pub desirability: Option<f64>,
    /// Position in the final order (0 = best; kept rows).
    pub position: Option<usize>,
}

/// The result of [`rank`]: one entry per input row (input order) and the kept rows' order.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Ranking {
    pub rows: Vec<RankedRow>,
    /// Indices of kept rows, best first.
    pub order: Vec<usize>,
    /// The z of the pessimistic bounds (from `confidence`).
    pub z: f64,
}

/// The objective matrix of `rows` (row-major, `rows.len() × objectives.len()`), every column
/// oriented for minimisation, at the pessimistic bound `z`: a maximised quantity contributes
/// −(lower bound), a minimised one its upper bound; log10 applied after taking the bound
/// (a non-positive bound gives −∞ before negation). Missing or NaN values become +∞ (worst).
pub fn objective_matrix(
    rows: &[Scored],
    idx: &[usize],
    objectives: &[Objective],
    colour_target: Option<(f64, f64)>,
    z: f64,
) -> Vec<f64> {
    let mut out = Vec::with_capacity(idx.len() * objectives.len());
    for &i in idx {
        for o in objectives {
            let v = rows[i].get(o.quantity, colour_target).map(|u| {
                let b = match o.direction {
                    Direction::Minimise => u.upper(z),
                    Direction::Maximise => u.lower(z),
                };
                let b = if o.log10 { log10_or_neg_inf(b) } else { b };
                match o.direction {
                    Direction::Minimise => b,
                    Direction::Maximise => -b,
                }
            });
            out.push(match v {
                Some(x) if !x.is_nan() => x,
                _ => f64::INFINITY,
            });
        }
    }
    out
}

pub(crate) fn log10_or_neg_inf(x: f64) -> f64 {
    if x > 0.0 {
        x.log10()
    } else {
        f64::NEG_INFINITY
    }
}

/// Filter, sort and score `rows`.
///
/// Returns one [`RankedRow`] per input row and the order of the kept rows. Complexity:
/// O(N·F) filters, O(N log N) Pareto sorting for one or two objectives (O(M·N·F_c) worst case
/// above, see [`pareto`]), O(M·N log N) crowding, O(N·K) desirability, O(N log N) final sort;
/// sequential (the driver may split rows over threads only before the Pareto step, which is
/// global).
///
/// # Errors
/// Invalid settings (see [`RankParams::validate`]).
pub fn rank(rows: &[Scored], params: &RankParams) -> Result<Ranking, String> {
    params.validate()?;
    let filters = params.filters.resolve()?;
    let z = normal_quantile(params.confidence).max(0.0);
    let mut out: Vec<RankedRow> = Vec::with_capacity(rows.len());
    let mut kept = Vec::new();
    for (i, r) in rows.iter().enumerate() {
        let (p, rejections) = filters.apply(r, params.p_min);
        let ok = rejections.is_empty();
        if ok {
            kept.push(i);
        }
        out.push(RankedRow {
            row: i,
            pass_probability: p,
            kept: ok,
            rejections,
            front: None,
            crowding: None,
            desirability: None,
            position: None,
        });
    }
    let target = filters.colour_target;
    let m = params.objectives.len();
    let (fronts, crowd) = if m > 0 {
        let f = objective_matrix(rows, &kept, &params.objectives, target, z);
        let fronts = non_dominated_sort(&f, m);
        let crowd = crowding_distance(&f, m, &fronts);
        (fronts, crowd)
    } else {
        (vec![0; kept.len()], vec![0.0; kept.len()])
    };
    let mut des = Vec::with_capacity(kept.len());
    for (k, &i) in kept.iter().enumerate() {
        let d = overall_desirability(&rows[i], &params.desirability, target, z);
        des.push(d);
        let row = &mut out[i];
        row.front = Some(fronts[k]);
        row.crowding = Some(crowd[k]);
        row.desirability = Some(d);
    }
    let mut order: Vec<usize> = (0..kept.len()).collect();
    order.sort_by(|&a, &b| {
        fronts[a]
            .cmp(&fronts[b])
            .then_with(|| des[b].total_cmp(&des[a]))
            .then_with(|| crowd[b].total_cmp(&crowd[a]))
            .then_with(|| kept[a].cmp(&kept[b]))
    });
    let order: Vec<usize> = order.into_iter().map(|k| kept[k]).collect();
    for (pos, &i) in order.iter().enumerate() {
        out[i].position = Some(pos);
    }
    Ok(Ranking {
        rows: out,
        order,
        z,
    })
}
