//! Hard filters with reason codes.
//!
//! Each filter yields the probability P_i that the row passes it under the row's
//! [`Uncertain`] distributions (0 or 1 for exact values); the row's
//! probability is P = Π P_i (filters taken as independent). The row is kept when P ≥ `p_min`.
//! A rejected row lists every filter with P_i < `p_min`, and `joint_probability_below_threshold`
//! when each filter passes alone but the product does not. A filter that needs a value the row
//! lacks gives P_i = 0 and a `missing_*` reason.
//!
//! Filter keys (workflow TOML, all optional; unknown keys are errors):
//!
//! ```toml
//! [rank.filters]
//! delta_est_max_ev = 0.2          # ΔEST ≤ this
//! f_min = 0.01                    # oscillator strength of S1 ≥ this
//! s1_min_ev = 2.6                 # S1 window
//! s1_max_ev = 3.0
//! colour_target = "bt2020-blue"   # a named target of crate::colour or "x,y"
//! colour_max_delta_uv = 0.05      # u′v′ distance to the target ≤ this
//! mw_max = 900.0                  # g/mol
//! le3_minus_ct1_min_ev = -0.1     # ³LE − ¹CT (= −(S1 − ³LE)) ≥ this: no deep local triplet trap
//! exclude_not_converged = true    # default true
//! ```

use serde::{Deserialize, Serialize};

use super::{Scored, Uncertain};

/// Why a row was rejected. The serde and [`as_str`](Reason::as_str) names are stable.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Reason {
    DeltaEstAboveMax,
    OscStrengthBelowMin,
    S1BelowMin,
    S1AboveMax,
    ColourOutsideTolerance,
    MolWeightAboveMax,
    Le3MinusCt1BelowMin,
    NotConverged,
    MissingDeltaEst,
    MissingOscStrength,
    MissingS1,
    MissingColour,
    MissingMolWeight,
    MissingS1Minus3le,
    JointProbabilityBelowThreshold,
}

impl Reason {
    pub fn as_str(self) -> &'static str {
        match self {
            Reason::DeltaEstAboveMax => "delta_est_above_max",
            Reason::OscStrengthBelowMin => "osc_strength_below_min",
            Reason::S1BelowMin => "s1_below_min",
            Reason::S1AboveMax => "s1_above_max",
            Reason::ColourOutsideTolerance => "colour_outside_tolerance",
            Reason::MolWeightAboveMax => "mol_weight_above_max",
            Reason::Le3MinusCt1BelowMin => "le3_minus_ct1_below_min",
            Reason::NotConverged => "not_converged",
            Reason::MissingDeltaEst => "missing_delta_est",
            Reason::MissingOscStrength => "missing_osc_strength",
            Reason::MissingS1 => "missing_s1",
            Reason::MissingColour => "missing_colour",
            Reason::MissingMolWeight => "missing_mol_weight",
            Reason::MissingS1Minus3le => "missing_s1_minus_3le",
            Reason::JointProbabilityBelowThreshold => "joint_probability_below_threshold",
        }
    }
}

impl std::fmt::Display for Reason {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// One failed filter: its reason and the probability of passing it (for
/// `joint_probability_below_threshold`, the product over all filters).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Rejection {
    pub reason: Reason,
    pub probability: f64,
}

/// The hard filters (every one optional; `None` = not applied).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct Filters {
    pub delta_est_max_ev: Option<f64>,
    pub f_min: Option<f64>,
    pub s1_min_ev: Option<f64>,
    pub s1_max_ev: Option<f64>,
    /// A named target of `crate::colour::TARGETS` or `"x,y"`.
    pub colour_target: Option<String>,
    /// Largest u′v′ distance to `colour_target` (needs the target).
    pub colour_max_delta_uv: Option<f64>,
    pub mw_max: Option<f64>,
    /// Smallest allowed ³LE − ¹CT (eV), computed as −(S1 − ³LE).
    pub le3_minus_ct1_min_ev: Option<f64>,
    /// Reject rows whose estimate did not converge (default true).
    pub exclude_not_converged: bool,
}

impl Default for Filters {
    fn default() -> Self {
        Filters {
            delta_est_max_ev: None,
            f_min: None,
            s1_min_ev: None,
            s1_max_ev: None,
            colour_target: None,
            colour_max_delta_uv: None,
            mw_max: None,
            le3_minus_ct1_min_ev: None,
            exclude_not_converged: true,
        }
    }
}

/// Filters checked and with the colour target parsed, ready to apply to many rows.
#[derive(Debug, Clone, PartialEq)]
pub struct ResolvedFilters {
    pub filters: Filters,
    pub colour_target: Option<(f64, f64)>,
}

impl Filters {
    /// Check the values and parse the colour target. The error names the key.
    pub fn resolve(&self) -> Result<ResolvedFilters, String> {
        let finite = |k: &str, v: Option<f64>| match v {
            Some(x) if !x.is_finite() => Err(format!("{k} = {x} is not a finite number")),
            _ => Ok(()),
        };
        finite("delta_est_max_ev", self.delta_est_max_ev)?;
        finite("f_min", self.f_min)?;
        finite("s1_min_ev", self.s1_min_ev)?;
        finite("s1_max_ev", self.s1_max_ev)?;
        finite("colour_max_delta_uv", self.colour_max_delta_uv)?;
        finite("mw_max", self.mw_max)?;
        finite("le3_minus_ct1_min_ev", self.le3_minus_ct1_min_ev)?;
        if let (Some(a), Some(b)) = (self.s1_min_ev, self.s1_max_ev)
            && a > b
        {
            return Err(format!("s1_min_ev = {a} is above s1_max_ev = {b}"));
        }
        if let Some(d) = self.colour_max_delta_uv
            && d < 0.0
        {
            return Err(format!("colour_max_delta_uv = {d} is negative"));
        }
        let colour_target = match &self.colour_target {
            Some(s) => Some(
                crate::colour::parse_target(s)
                    .map_err(|e| format!("colour_target: {e}"))?
                    .1,
            ),
            None => None,
        };
        if self.colour_max_delta_uv.is_some() && colour_target.is_none() {
            return Err("colour_max_delta_uv needs colour_target".into());
        }
        Ok(ResolvedFilters {
            filters: self.clone(),
            colour_target,
        })
    }
}

impl ResolvedFilters {
    /// Probability of passing all filters and the failed filters (empty = kept).
    pub fn apply(&self, r: &Scored, p_min: f64) -> (f64, Vec<Rejection>) {
        let f = &self.filters;
        let mut p_all = 1.0;
        let mut out = Vec::new();
        let mut check = |p: f64, reason: Reason| {
            p_all *= p;
            if p < p_min || p == 0.0 {
                out.push(Rejection {
                    reason,
                    probability: p,
                });
            }
        };
        if f.exclude_not_converged && r.not_converged {
            check(0.0, Reason::NotConverged);
        }
        if let Some(max) = f.delta_est_max_ev {
            match r.delta_est_ev {
                Some(u) => check(u.prob_at_most(max), Reason::DeltaEstAboveMax),
                None => check(0.0, Reason::MissingDeltaEst),
            }
        }
        if let Some(min) = f.f_min {
            match r.osc_strength {
                Some(u) => check(u.prob_at_least(min), Reason::OscStrengthBelowMin),
                None => check(0.0, Reason::MissingOscStrength),
            }
        }
        if f.s1_min_ev.is_some() || f.s1_max_ev.is_some() {
            match r.s1_ev {
                Some(u) => {
                    let below = f.s1_min_ev.map_or(0.0, |t| u.prob_below(t));
                    let above = f.s1_max_ev.map_or(0.0, |t| 1.0 - u.prob_at_most(t));
                    let p = (1.0 - below - above).max(0.0);
                    // The side that loses more probability names the failure.
                    let reason = if below >= above {
                        Reason::S1BelowMin
                    } else {
                        Reason::S1AboveMax
                    };
                    check(p, reason);
                }
                None => check(0.0, Reason::MissingS1),
            }
        }
        if let (Some(max), Some(t)) = (f.colour_max_delta_uv, self.colour_target) {
            match r.cie_xy {
                Some(xy) => {
                    let d = crate::colour::delta_uv(xy, t);
                    check((d <= max) as u8 as f64, Reason::ColourOutsideTolerance);
                }
                None => check(0.0, Reason::MissingColour),
            }
        }
        if let Some(max) = f.mw_max {
            match r.mol_weight {
                Some(w) => check(
                    Uncertain::exact(w).prob_at_most(max),
                    Reason::MolWeightAboveMax,
                ),
                None => check(0.0, Reason::MissingMolWeight),
            }
        }
        if let Some(min) = f.le3_minus_ct1_min_ev {
            match r.s1_minus_3le_ev {
                Some(u) => check(u.negated().prob_at_least(min), Reason::Le3MinusCt1BelowMin),
                None => check(0.0, Reason::MissingS1Minus3le),
            }
        }
        if out.is_empty() && p_all < p_min {
            out.push(Rejection {
                reason: Reason::JointProbabilityBelowThreshold,
                probability: p_all,
            });
        }
        (p_all, out)
    }
}
