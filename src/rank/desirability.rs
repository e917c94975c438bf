//! Desirability functions and the overall desirability.
//!
//! Derringer & Suich, "Simultaneous optimization of several response variables", J. Qual.
//! Technol. 12, 214–219 (1980) (the exponential family before it: Harrington, Ind. Qual.
//! Control 21, 494–498 (1965)). With y the response, L < T < U and exponents s, t > 0:
//!
//! * larger is better: d = 0 for y ≤ L, ((y − L)/(T − L))^s for L < y < T, 1 for y ≥ T;
//! * smaller is better: d = 1 for y ≤ T, ((U − y)/(U − T))^s for T < y < U, 0 for y ≥ U;
//! * target is best: d = ((y − L)/(T − L))^s for L ≤ y ≤ T, ((U − y)/(U − T))^t for
//!   T ≤ y ≤ U, 0 outside [L, U].
//!
//! Overall desirability: the weighted geometric mean D = (Π d_i^{w_i})^{1/Σ w_i} over terms
//! with w_i > 0 (w_i = 1 for all gives the original unweighted mean); any d_i = 0 gives D = 0;
//! no terms give D = 1. A row lacking a term's quantity has d = 0 for it.
//!
//! **The ΔEST cap.** ΔEST is scored smaller-is-better with T = [`DELTA_EST_CAP_EV`]: below
//! the cap d = 1, so a smaller gap earns nothing more. Under zero differential overlap a
//! perpendicular donor–acceptor bond gives ΔEST → 0 and f → 0 together; an uncapped reward
//! would steer the ranking to dark molecules. The cap 0.04 eV (our choice in the 0.03–0.05 eV
//! range: about 1.5 k_BT at 300 K, where k_RISC ∝ exp(−ΔEST/k_BT) is already within a factor
//! ~5 of its ΔEST = 0 limit) is a documented default, not a literature value.
//!
//! With an uncertain value, d is evaluated at the two pessimistic bounds (value − z·σ_lo,
//! value + z·σ_hi) and the smaller is taken; each function above is unimodal, so this is its
//! minimum over the interval.

use serde::{Deserialize, Serialize};

use super::{Quantity, Scored, log10_or_neg_inf};

/// Default cap on the ΔEST reward (eV): smaller gaps all get desirability 1.
pub const DELTA_EST_CAP_EV: f64 = 0.04;

/// One Derringer–Suich function.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum DesirabilityFn {
    LargerIsBetter {
        low: f64,
        target: f64,
        s: f64,
    },
    SmallerIsBetter {
        target: f64,
        high: f64,
        s: f64,
    },
    TargetIsBest {
        low: f64,
        target: f64,
        high: f64,
        s: f64,
        t: f64,
    },
}

impl DesirabilityFn {
    /// d(y) in [0, 1]; NaN gives 0.
    pub fn eval(&self, y: f64) -> f64 {
        if y.is_nan() {
            return 0.0;
        }
        match *self {
            DesirabilityFn::LargerIsBetter { low, target, s } => {
                if y <= low {
                    0.0
                } else if y >= target {
                    1.0
                } else {
                    ((y - low) / (target - low)).powf(s)
                }
            }
            DesirabilityFn::SmallerIsBetter { target, high, s } => {
                if y <= target {
                    1.0
                } else if y >= high {
                    0.0
                } else {
                    ((high - y) / (high - target)).powf(s)
                }
            }
            DesirabilityFn::TargetIsBest {
                low,
                target,
                high,
                s,
                t,
            } => {
                if y < low || y > high {
                    0.0
                } else if y <= target {
                    ((y - low) / (target - low)).powf(s)
                } else {
                    ((high - y) / (high - target)).powf(t)
                }
            }
        }
    }

    pub fn validate(&self) -> Result<(), String> {
        let ok = |x: f64| x.is_finite();
        let pos = |x: f64| x.is_finite() && x > 0.0;
        match *self {
            DesirabilityFn::LargerIsBetter { low, target, s } => {
                if !(ok(low) && ok(target) && low < target && pos(s)) {
                    return Err(format!(
                        "larger_is_better needs finite low < target and s > 0 (low {low}, target {target}, s {s})"
                    ));
                }
            }
            DesirabilityFn::SmallerIsBetter { target, high, s } => {
                if !(ok(target) && ok(high) && target < high && pos(s)) {
                    return Err(format!(
                        "smaller_is_better needs finite target < high and s > 0 (target {target}, high {high}, s {s})"
                    ));
                }
            }
            DesirabilityFn::TargetIsBest {
                low,
                target,
                high,
                s,
                t,
            } => {
                if !(ok(low) && ok(high) && low < target && target < high && pos(s) && pos(t)) {
                    return Err(format!(
                        "target_is_best needs finite low < target < high and s, t > 0 (low {low}, target {target}, high {high}, s {s}, t {t})"
                    ));
                }
            }
        }
        Ok(())
    }
}

/// A desirability term: a quantity, its function (on log10 of the value when `log10`) and its
/// weight in the geometric mean.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DesirabilityTerm {
    pub quantity: Quantity,
    pub function: DesirabilityFn,
    #[serde(default = "one")]
    pub weight: f64,
    #[serde(default)]
    pub log10: bool,
}

fn one() -> f64 {
    1.0
}

impl DesirabilityTerm {
    /// ΔEST smaller-is-better, flat (d = 1) below `cap`, 0 from 0.30 eV (where
    /// exp(−ΔEST/k_BT) at 300 K is ~10⁻⁵), linear between; weight 1.
    pub fn delta_est_capped(cap: f64) -> Self {
        DesirabilityTerm {
            quantity: Quantity::DeltaEstEv,
            function: DesirabilityFn::SmallerIsBetter {
                target: cap,
                high: 0.30,
                s: 1.0,
            },
            weight: 1.0,
            log10: false,
        }
    }

    /// The default terms: [`delta_est_capped`](Self::delta_est_capped) at
    /// [`DELTA_EST_CAP_EV`], and oscillator strength larger-is-better on log10 f from
    /// f = 0.001 (d = 0) to f = 0.1 (d = 1), linear in log10 f; both weight 1. These bounds
    /// are our defaults for screening, not literature values.
    pub fn defaults() -> Vec<Self> {
        vec![
            Self::delta_est_capped(DELTA_EST_CAP_EV),
            DesirabilityTerm {
                quantity: Quantity::OscStrength,
                function: DesirabilityFn::LargerIsBetter {
                    low: -3.0,
                    target: -1.0,
                    s: 1.0,
                },
                weight: 1.0,
                log10: true,
            },
        ]
    }

    pub fn validate(&self) -> Result<(), String> {
        if !(self.weight.is_finite() && self.weight >= 0.0) {
            return Err(format!(
                "desirability weight of {} = {} is not a non-negative number",
                self.quantity.as_str(),
                self.weight
            ));
        }
        self.function
            .validate()
            .map_err(|e| format!("desirability of {}: {e}", self.quantity.as_str()))
    }

    /// The pessimistic d of this term for `row` (0 when the quantity is missing).
    pub fn eval(&self, row: &Scored, colour_target: Option<(f64, f64)>, z: f64) -> f64 {
        let Some(u) = row.get(self.quantity, colour_target) else {
            return 0.0;
        };
        let tr = |x: f64| {
            if self.log10 { log10_or_neg_inf(x) } else { x }
        };
        let lo = self.function.eval(tr(u.lower(z)));
        let hi = self.function.eval(tr(u.upper(z)));
        lo.min(hi)
    }
}

/// Weighted geometric mean of the terms' d for one row (see the module documentation).
pub fn overall_desirability(
    row: &Scored,
    terms: &[DesirabilityTerm],
    colour_target: Option<(f64, f64)>,
    z: f64,
) -> f64 {
    let mut sw = 0.0;
    let mut sl = 0.0;
    for t in terms {
        if t.weight <= 0.0 {
            continue;
        }
        let d = t.eval(row, colour_target, z);
        if d <= 0.0 || d.is_nan() {
            return 0.0;
        }
        sw += t.weight;
        sl += t.weight * d.ln();
    }
    if sw == 0.0 { 1.0 } else { (sl / sw).exp() }
}

/// (Π d_i^{w_i})^{1/Σ w_i} over pairs (d_i, w_i) with w_i > 0; 0 if any such d_i is 0; 1 when
/// no weight is positive.
pub fn weighted_geometric_mean(dw: &[(f64, f64)]) -> f64 {
    let mut sw = 0.0;
    let mut sl = 0.0;
    for &(d, w) in dw {
        if w <= 0.0 {
            continue;
        }
        if d <= 0.0 || d.is_nan() {
            return 0.0;
        }
        sw += w;
        sl += w * d.ln();
    }
    if sw == 0.0 { 1.0 } else { (sl / sw).exp() }
}
