//! The fast tier's model. A tuple that is one donor–acceptor dimer (D–A) takes the pair
//! table's π-tier values as they are ([`super::pairs`]: a cached π calculation, exact). Every
//! other tuple gets, per quantity, a linear model on the physical descriptors of
//! [`super::features`] with one coefficient vector per class (bridged arms; several direct
//! arms), plus per-bridge slopes on the arm dimer's log ΔEST, log f and the link coupling, plus
//! additive fragment terms (one per fragment and slot — donor, acceptor, bridge of the best
//! donor–acceptor path — the Free–Wilson form of additive substituent contributions: Free &
//! Wilson, J. Med. Chem. 7, 395 (1964)). Quantities: S1, log10(ΔEST + 0.005 eV) and
//! log10(f + 10⁻⁴), all torsion-averaged π-tier values; T1 is S1 − ΔEST so the three never
//! contradict. Fitted by `examples/fit_fast_tier.rs`, stored in `data/fast-tier.toml` with the
//! fit's held-out figures. A fragment the fit never saw gets no term (and the estimate says so).
//!
//! The cascade orders tuples by a fourth prediction of the same form plus, per class, the
//! products of the pair-table descriptors (a quadratic form), the **screen score**: the π
//! tier's log10 k_TADF floored at a quantile of the fitting sample (`[screen]` in the model
//! file), fitted directly. A screen only has to order the upper tail; below the floor every tuple
//! is equally rejected, so the fit spends nothing on ordering the bottom of the library (a
//! censored target; the quantile is chosen by cross-validation on the fitting rows). D–A tuples
//! score with their dimer's exact log10 k_TADF. The score is fitted at one temperature; a
//! workflow at another temperature orders by the merit composed from S1, ΔEST and f instead.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::cards::CardSet;
use super::features::{
    BRIDGE_SLOPE_FEATURES, DIMER_FEATURES, Describer, FEATURE_NAMES, HALF_FEATURES, N_FEATURES,
    TupleClass, TupleSummary, describe, dimer_descriptors, half_descriptors,
};
use super::trees::{Mask, SplitMasks};
use crate::combine::Tuple;

/// The shipped model.
pub const DEFAULT_MODEL: &str = include_str!("../../data/fast-tier.toml");

/// Floor added to f before the logarithm: the same as the merit's, so a fitted log10(f + floor)
/// is the merit's log10(f + floor) without a round trip.
pub const F_FLOOR: f64 = crate::photophysics::F_DARK_FLOOR;
/// Offset added to ΔEST (eV) before the logarithm (resolves small gaps without diverging; a
/// choice of this tool, a fifth of k_BT at 300 K).
pub const DEST_OFFSET_EV: f64 = 0.005;
/// Quantities the model predicts, in coefficient order.
pub const TARGETS: [&str; 4] = ["s1_ev", "log10_delta_est", "log10_f", "screen"];

/// First of the descriptors whose pairwise products enter the screen score: the pair-table
/// descriptors (`pair_s1_min_ev` onwards, to the last), the π tier's own numbers for the arms'
/// dimers, whose combination decides which tuples reach the top. Products of every descriptor
/// ordered the held-out top no better (fitted on the first π-tier sample alone: 87 % of the
/// top 100 kept at 10 % pass either way) and cost eight times as much per tuple.
pub const PRODUCT_FIRST: usize = 14;
/// Descriptors in the products.
pub const N_PRODUCT_FEATURES: usize = N_FEATURES - PRODUCT_FIRST;
/// Number of products (i ≤ j) in the screen score.
pub const N_PRODUCTS: usize = N_PRODUCT_FEATURES * (N_PRODUCT_FEATURES + 1) / 2;

/// The descriptor index pairs (i ≤ j) of the screen score's products, in coefficient order.
pub fn products() -> impl Iterator<Item = (usize, usize)> {
    (PRODUCT_FIRST..N_FEATURES).flat_map(|i| (i..N_FEATURES).map(move |j| (i, j)))
}

/// Per-fragment additive terms, one value per target.
pub type Terms = [f64; 4];
/// Per-bridge slopes: `[target][k]` multiplies descriptor `BRIDGE_SLOPE_FEATURES[k]`.
pub type Slopes = [[f64; 3]; 4];

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Coefficients {
    pub s1_ev: Vec<f64>,
    pub log10_delta_est: Vec<f64>,
    pub log10_f: Vec<f64>,
    /// The screen score (log10 k_TADF floored, see [`ScreenFit`]): linear part, and the
    /// coefficients of the descriptor products in [`products`] order (empty when the score
    /// has none, [`ScreenFit::products`]).
    pub screen: Vec<f64>,
    pub screen_products: Vec<f64>,
}

/// What the screen score was fitted to: the π tier's log10 k_TADF (s⁻¹) at this temperature and
/// refractive index, floored at the `floor_quantile` quantile of the fitting sample (`floor`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ScreenFit {
    pub floor_quantile: f64,
    pub floor: f64,
    pub temperature_k: f64,
    pub refractive_index: f64,
    /// Whether the ridge part has the per-class products of the pair-table descriptors.
    pub products: bool,
    /// The boosted trees fitted to the ridge part's residuals (`trees = 0`: none).
    pub boost: super::trees::BoostParams,
    /// Groups of descriptors (indices): each tree asks about one group only (empty: one group
    /// of every descriptor). Groups of a few descriptors at few thresholds let the forest be
    /// tabulated, one table look-up per group ([`super::trees::Forest`]).
    pub tree_groups: Vec<Vec<usize>>,
    /// The trees refine only tuples whose ridge part reaches `gate`, the ridge part's
    /// `gate_quantile` quantile over the fitting rows (absent: every tuple). A screen passes
    /// the upper tail, and the trees' work is spent where it can change what passes; below
    /// the gate a tuple scores its ridge part plus the least the trees can add, so it ranks
    /// below every refined tuple ([`BoundModel::score`]).
    pub gate_quantile: Option<f64>,
    pub gate: Option<f64>,
}

impl ScreenFit {
    /// The settings this fit was made with (to refit it).
    pub fn settings(&self) -> super::fit::ScreenSettings {
        super::fit::ScreenSettings {
            floor_quantile: self.floor_quantile,
            products: self.products,
            boost: self.boost,
            tree_groups: self.tree_groups.clone(),
            gate_quantile: self.gate_quantile,
        }
    }
}

/// How the model was fitted and how it did on tuples it was not fitted on.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FitRecord {
    pub fixture: String,
    pub split: String,
    pub ridge_alpha: f64,
    /// Rows fitted (fitting rows that are not plain D–A dimers).
    pub n_fit: usize,
    pub held_out: super::fit::Evaluation,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FastModel {
    pub features: Vec<String>,
    /// Descriptor coefficients of tuples whose arms are bridged.
    pub bridged: Coefficients,
    /// Descriptor coefficients of tuples with several direct arms.
    pub multi_arm: Coefficients,
    /// Bridge id → slopes (`Slopes`) for bridged tuples.
    pub bridge_slopes: BTreeMap<String, Slopes>,
    /// Fragment id → terms, per slot of the best path.
    pub donor_terms: BTreeMap<String, Terms>,
    pub acceptor_terms: BTreeMap<String, Terms>,
    pub bridge_terms: BTreeMap<String, Terms>,
    pub screen: ScreenFit,
    /// The screen score's boosted trees (on the descriptors), added to its ridge part.
    pub screen_trees: Vec<super::trees::Tree>,
    pub fit: FitRecord,
}

/// The fast tier's numbers for one tuple (screening values, not estimates to report).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct FastEstimate {
    pub s1_ev: f64,
    pub t1_ev: f64,
    pub delta_est_ev: f64,
    pub f_s1: f64,
    /// log10 k_TADF (s⁻¹) from these values (`photophysics::log10_tadf_rate`).
    pub merit: f64,
    /// The cascade's ordering key, larger is better: the screen score (log10 k_TADF floored,
    /// fitted directly; a D–A tuple's exact log10 k_TADF), or `merit` when the model is bound
    /// at a temperature other than the score's.
    pub score: f64,
    /// Best donor–acceptor path: orbital gap, ⟨cos²θ⟩ coupling, mixing and donor-side twist.
    pub gap_ev: f64,
    pub coupling: f64,
    pub mixing: f64,
    pub twist_deg: f64,
    /// A fragment of the best path had no fitted term (outside the fitted library).
    pub unseen_fragment: bool,
}

/// A model bound to one library's cards: fragment terms by library index.
#[derive(Debug, Clone)]
pub struct BoundModel {
    /// `[class][target]`: class 0 bridged, 1 several direct arms.
    pub(super) w: [[[f64; N_FEATURES]; 4]; 2],
    /// `[class][i][j]`: the screen score's product coefficients over the product descriptors,
    /// upper triangle (j ≥ i; zero below), so the quadratic part is zᵀQz.
    pub(super) q: [[[f64; N_PRODUCT_FEATURES]; N_PRODUCT_FEATURES]; 2],
    pub(super) slopes: Vec<Option<Slopes>>,
    /// Per library index: Some(terms) when fitted.
    pub(super) donor: Vec<Option<Terms>>,
    pub(super) acceptor: Vec<Option<Terms>>,
    pub(super) bridge: Vec<Option<Terms>>,
    /// Refractive index and temperature for the merit.
    pub refractive_index: f64,
    pub temperature_k: f64,
    /// log10 k_TADF = merit_const + 2·log10 S1 + log10(f + 10⁻⁴) − ΔEST·merit_per_ev.
    pub(super) merit_const: f64,
    pub(super) merit_per_ev: f64,
    /// log10 of the f floor (a libm call kept out of the hot path).
    log10_f_floor: f64,
    /// Added to the screen score for the bound refractive index (k_r ∝ n², the same shift for
    /// every tuple); None when bound at a temperature other than the score's.
    pub(super) screen_shift: Option<f64>,
    /// Whether the screen score has its products (`q` is zero otherwise).
    pub(super) products: bool,
    /// The ridge part (before `screen_shift`) from which the trees refine a tuple
    /// ([`ScreenFit::gate`]; −∞ without a gate or without trees), and what a tuple below it
    /// takes instead of the trees' sum: the least the forest can give
    /// ([`super::trees::Forest::lower_bound`]).
    pub(super) gate: f64,
    pub(super) tree_floor: f64,
    /// The share of the fitting rows at or above the gate (1 − [`ScreenFit::gate_quantile`];
    /// 1 without a gate).
    gate_share: f64,
    forest: super::trees::Forest,
    /// The forest's mask rows of the pair-table descriptors per table entry (None when the
    /// forest is not in that form, or after [`Self::drop_entry_masks`]).
    entry_masks: Option<EntryMasks>,
}

/// The screen trees' mask rows of the pair-table descriptors, per entry of the pair table,
/// computed when the model is bound: a tuple's best dimer and its bridged arm's halves are
/// table entries, so the rows of those ten descriptors are looked up (three ORs) instead of
/// counted per tuple. The same mask, so the same score ([`super::trees::SplitMasks`]).
#[derive(Debug, Clone)]
pub(super) struct EntryMasks {
    /// Per entry, the rows of [`DIMER_FEATURES`] for it as the best dimer.
    best: Vec<Mask>,
    /// Per entry, the rows of [`HALF_FEATURES`] for it as donor–bridge and as
    /// bridge–acceptor half.
    halves: Vec<[Mask; 2]>,
    /// The neutral entry as the best dimer (no arm's dimer known).
    fallback: Mask,
    /// The halves' zeros of a direct best arm.
    direct: Mask,
    /// The descriptors still counted per tuple (slots of the split masks).
    slots: Vec<usize>,
}

impl EntryMasks {
    fn new(masks: &SplitMasks, cards: &CardSet) -> EntryMasks {
        let rows = |fs: &[usize], v: &[f64]| {
            let pairs: Vec<(usize, f64)> = fs.iter().copied().zip(v.iter().copied()).collect();
            masks.rows_of(&pairs)
        };
        let entries = &cards.pair_table.entries;
        let halves = |k: u32| {
            let h = half_descriptors(cards, k);
            [rows(&HALF_FEATURES[0], &h), rows(&HALF_FEATURES[1], &h)]
        };
        let [db, ba] = [0, 1].map(|i| rows(&HALF_FEATURES[i], &[0.0; 3]));
        let covered: Vec<usize> = DIMER_FEATURES
            .iter()
            .chain(HALF_FEATURES.iter().flatten())
            .copied()
            .collect();
        EntryMasks {
            best: entries
                .iter()
                .map(|e| rows(&DIMER_FEATURES, &dimer_descriptors(e)))
                .collect(),
            halves: (0..entries.len()).map(|k| halves(k as u32)).collect(),
            fallback: rows(&DIMER_FEATURES, &dimer_descriptors(&cards.pair_fallback)),
            direct: std::array::from_fn(|w| db[w] | ba[w]),
            slots: masks.slots_except(&covered),
        }
    }

    /// The trees' sum for a tuple's descriptors and summary.
    #[inline]
    fn value(&self, masks: &SplitMasks, x: &[f64; N_FEATURES], s: &TupleSummary) -> f64 {
        masks.value_with(x, &self.pre(s.dimer_entry, s.halves), &self.slots)
    }

    /// The rows of the ten pair-table descriptors OR-ed: best dimer `entry` (None: the
    /// neutral entry) and the bridged best arm's `halves` (None: a direct arm).
    #[inline]
    pub(super) fn pre(&self, entry: Option<u32>, halves: Option<(u32, u32)>) -> Mask {
        let best = match entry {
            Some(k) => &self.best[k as usize],
            None => &self.fallback,
        };
        let halves: Mask = match halves {
            Some((x, y)) => {
                let (a, b) = (&self.halves[x as usize][0], &self.halves[y as usize][1]);
                std::array::from_fn(|w| a[w] | b[w])
            }
            None => self.direct,
        };
        std::array::from_fn(|w| best[w] | halves[w])
    }
}

impl FastModel {
    pub fn parse(text: &str) -> Result<FastModel, String> {
        let m: FastModel = toml::from_str(text).map_err(|e| e.to_string())?;
        for (class, c) in [("bridged", &m.bridged), ("multi_arm", &m.multi_arm)] {
            for (name, v) in [
                ("s1_ev", &c.s1_ev),
                ("log10_delta_est", &c.log10_delta_est),
                ("log10_f", &c.log10_f),
                ("screen", &c.screen),
            ] {
                if v.len() != N_FEATURES {
                    return Err(format!(
                        "{class}.{name}: {} values for {N_FEATURES} descriptors",
                        v.len()
                    ));
                }
            }
        }
        if let Some(t) = m
            .screen_trees
            .iter()
            .find(|t| t.features.iter().any(|&f| f >= N_FEATURES))
        {
            return Err(format!(
                "screen_trees: descriptor index {:?} out of range",
                t.features
            ));
        }
        if let Some(f) = m
            .screen
            .tree_groups
            .iter()
            .flatten()
            .find(|&&f| f >= N_FEATURES)
        {
            return Err(format!(
                "screen.tree_groups: descriptor index {f} out of range"
            ));
        }
        let n_products = if m.screen.products { N_PRODUCTS } else { 0 };
        for (class, c) in [("bridged", &m.bridged), ("multi_arm", &m.multi_arm)] {
            if c.screen_products.len() != n_products {
                return Err(format!(
                    "{class}.screen_products: {} values for {n_products} products",
                    c.screen_products.len()
                ));
            }
        }
        if m.features.iter().map(String::as_str).ne(FEATURE_NAMES) {
            return Err(format!("features: expected {FEATURE_NAMES:?}"));
        }
        Ok(m)
    }

    pub fn default_model() -> FastModel {
        FastModel::parse(DEFAULT_MODEL).expect("the shipped fast-tier model is valid")
    }

    /// Bind to the fragments of `cards` (by id).
    pub fn bind(&self, cards: &CardSet, refractive_index: f64, temperature_k: f64) -> BoundModel {
        let look = |m: &BTreeMap<String, Terms>| -> Vec<Option<Terms>> {
            cards.cards.iter().map(|c| m.get(&c.id).copied()).collect()
        };
        let arr = |v: &[f64]| -> [f64; N_FEATURES] { v.try_into().expect("length checked") };
        let block = |c: &Coefficients| {
            [
                arr(&c.s1_ev),
                arr(&c.log10_delta_est),
                arr(&c.log10_f),
                arr(&c.screen),
            ]
        };
        let merit_const = |n: f64| {
            // k_r at 1 eV with f = 1 (Einstein A, photophysics::radiative_rate), over 3.
            (crate::photophysics::radiative_rate(1.0, 1.0, n) / 3.0).log10()
        };
        let upper = |c: &Coefficients| {
            let mut q = [[0.0; N_PRODUCT_FEATURES]; N_PRODUCT_FEATURES];
            for ((i, j), &v) in products().zip(&c.screen_products) {
                q[i - PRODUCT_FIRST][j - PRODUCT_FIRST] = v;
            }
            q
        };
        // The descriptors summed over a tuple's arms change with every arm, the others only
        // with its best path, best dimer and lowest energies: the screener sums the trees on
        // the latter once per combination of those ([`super::screen`]), so the trees asking
        // about a sum go last in the mask.
        let forest = super::trees::Forest::new(
            &self.screen_trees,
            &self.screen.tree_groups,
            &[super::features::LN_PATHS, super::features::MIXING_SQ_SUM],
        );
        BoundModel {
            w: [block(&self.bridged), block(&self.multi_arm)],
            q: [upper(&self.bridged), upper(&self.multi_arm)],
            slopes: cards
                .cards
                .iter()
                .map(|c| self.bridge_slopes.get(&c.id).copied())
                .collect(),
            donor: look(&self.donor_terms),
            acceptor: look(&self.acceptor_terms),
            bridge: look(&self.bridge_terms),
            refractive_index,
            temperature_k,
            merit_const: merit_const(refractive_index),
            merit_per_ev: 1.0
                / (crate::photophysics::K_B_EV * temperature_k * std::f64::consts::LN_10),
            log10_f_floor: F_FLOOR.log10(),
            // Within 0.01 K: the temperature a workflow names, not a computed one.
            screen_shift: ((temperature_k - self.screen.temperature_k).abs() < 0.01)
                .then(|| merit_const(refractive_index) - merit_const(self.screen.refractive_index)),
            products: self.screen.products,
            gate: match self.screen.gate {
                Some(g) if !forest.is_empty() => g,
                _ => f64::NEG_INFINITY,
            },
            tree_floor: forest.lower_bound(),
            gate_share: 1.0 - self.screen.gate_quantile.unwrap_or(0.0),
            entry_masks: forest.single_masks().map(|m| EntryMasks::new(m, cards)),
            forest,
        }
    }
}

/// w · x with four partial sums (independent chains the CPU can overlap and the compiler can
/// vectorise; one running sum would serialise the additions).
#[inline]
fn dot<const N: usize>(w: &[f64; N], x: &[f64; N]) -> f64 {
    let mut acc = [0.0f64; 4];
    let n = N / 4 * 4;
    for i in (0..n).step_by(4) {
        for k in 0..4 {
            acc[k] += w[i + k] * x[i + k];
        }
    }
    let mut s = (acc[0] + acc[1]) + (acc[2] + acc[3]);
    for i in n..N {
        s += w[i] * x[i];
    }
    s
}

impl BoundModel {
    /// Order by the screen score's ridge part alone (no boosted trees): faster per tuple
    /// through the screener, a coarser screen (DEVELOPERS.md: 90 % instead of 96 % of the
    /// held-out top 100 kept at 10 % pass).
    pub fn drop_trees(&mut self) {
        self.forest = super::trees::Forest::default();
        self.entry_masks = None;
        self.gate = f64::NEG_INFINITY;
        self.tree_floor = 0.0;
    }

    /// The screen score that separates refined tuples from those below the gate: every
    /// refined score is at least this, every other (D–A dimers aside, which score exactly)
    /// below it. None without a gate, or when the score is the composed merit.
    pub fn gate_score(&self) -> Option<f64> {
        let shift = self.screen_shift?;
        self.gate
            .is_finite()
            .then_some(self.gate + self.tree_floor + shift)
    }

    /// Keep the gate only for a screen that passes at most the share of the fitting rows the
    /// trees refine (1 − the gate's quantile): a larger pass would reach tuples ordered by
    /// the ridge part alone, so the trees then refine every tuple ([`Self::refine_all`]).
    /// Returns whether the gate stays.
    pub fn gate_for_pass(&mut self, pass_fraction: f64) -> bool {
        if pass_fraction > self.gate_share {
            self.refine_all();
        }
        self.gate.is_finite()
    }

    /// Let the trees refine every tuple's score (no gate): slower per tuple, and the order
    /// below the gate is the trees' too.
    pub fn refine_all(&mut self) {
        self.gate = f64::NEG_INFINITY;
    }

    /// The ridge part (before the refractive-index shift) from which the trees refine a
    /// tuple's score (−∞: every tuple), and what a tuple below it takes instead of their sum.
    pub fn gate(&self) -> (f64, f64) {
        (self.gate, self.tree_floor)
    }

    /// Evaluate the trees from the descriptors alone, without the per-entry rows computed at
    /// binding: the reference the faster path is tested against (the same scores).
    pub fn drop_entry_masks(&mut self) {
        self.entry_masks = None;
    }

    /// Whether the screen's trees take the pair-table descriptors' rows per entry.
    pub fn entry_masks_in_use(&self) -> bool {
        self.entry_masks.is_some()
    }

    /// The screen trees' sum for a tuple.
    #[inline]
    fn trees(&self, x: &[f64; N_FEATURES], s: &TupleSummary) -> f64 {
        match (&self.entry_masks, self.forest.single_masks()) {
            (Some(e), Some(m)) => e.value(m, x, s),
            _ => self.forest.value(x),
        }
    }

    /// The trees as split masks with the pair-table rows per entry: the form the screener
    /// ([`super::screen::Screener`]) evaluates (None: no trees, or another form).
    pub(super) fn entry_masked_trees(&self) -> Option<(&SplitMasks, &EntryMasks)> {
        Some((self.forest.single_masks()?, self.entry_masks.as_ref()?))
    }

    /// How the screen score's trees are evaluated (for reports and benchmarks).
    pub fn forest(&self) -> &super::trees::Forest {
        &self.forest
    }

    /// The cascade's ordering key alone (equal to [`Self::predict`]'s `score`) and whether a
    /// fragment was outside the fit. A stream of tuples is scored faster by
    /// [`super::screen::Screener`] (the screen's path, tested equal to this).
    #[inline]
    pub fn score(&self, cards: &CardSet, t: &Tuple) -> Option<(f64, bool)> {
        self.score_stream(&mut Describer::new(cards), t)
    }

    /// [`Self::score`] through a [`Describer`], which reuses the arm look-ups of the tuple
    /// before (the same numbers): the reference the screener is tested against.
    #[inline]
    pub fn score_stream(&self, d: &mut Describer, t: &Tuple) -> Option<(f64, bool)> {
        let mut x = [0.0; N_FEATURES];
        let s = d.describe(t, &mut x)?;
        Some(self.score_descriptors(&x, &s))
    }

    /// The ordering key from a tuple's descriptors and summary (see [`Self::score`]).
    #[inline]
    pub fn score_descriptors(&self, x: &[f64; N_FEATURES], s: &TupleSummary) -> (f64, bool) {
        if s.class == TupleClass::Dimer {
            let e = &s.dimer;
            return (
                self.merit_const + e.log10_s1sq_f - e.v.delta_est_ev.max(0.0) * self.merit_per_ev,
                false,
            );
        }
        if let Some(shift) = self.screen_shift {
            let (y, unseen) = self.raw::<1>(x, s, 3);
            let quad = if self.products {
                self.quadratic(x, s.class)
            } else {
                0.0
            };
            let ridge = y[0] + quad;
            let trees = if ridge < self.gate {
                self.tree_floor
            } else {
                self.trees(x, s)
            };
            return (ridge + trees + shift, unseen);
        }
        let (y, unseen) = self.raw::<3>(x, s, 0);
        let d = ((y[1] * std::f64::consts::LN_10).exp() - DEST_OFFSET_EV).max(0.0);
        (
            // log10(f + floor) with f clamped at zero, as in predict().
            self.merit_const + 2.0 * y[0].log10() + y[2].max(self.log10_f_floor)
                - d * self.merit_per_ev,
            unseen,
        )
    }

    /// The screen score's products: zᵀQz over the pair-table descriptors, Q of `class`.
    #[inline(always)]
    fn quadratic(&self, x: &[f64; N_FEATURES], class: TupleClass) -> f64 {
        let q = &self.q[usize::from(class != TupleClass::Bridged)];
        let z = &x[PRODUCT_FIRST..];
        // v = Qᵀz row by row, then z · v.
        let mut v = [0.0; N_PRODUCT_FEATURES];
        for (zi, qi) in z.iter().zip(q) {
            for j in 0..N_PRODUCT_FEATURES {
                v[j] += zi * qi[j];
            }
        }
        v.iter().zip(z).map(|(a, b)| a * b).sum()
    }

    /// `K` consecutive linear predictions of a fitted class (bridged or several direct arms),
    /// targets `first..first + K` of [`TARGETS`].
    #[inline]
    fn raw<const K: usize>(
        &self,
        x: &[f64; N_FEATURES],
        s: &TupleSummary,
        first: usize,
    ) -> ([f64; K], bool) {
        let w = &self.w[usize::from(s.class != TupleClass::Bridged)];
        let mut y = [0.0; K];
        for (k, yk) in y.iter_mut().enumerate() {
            *yk = dot(&w[first + k], x);
        }
        let mut unseen = false;
        let mut add = |terms: Option<Terms>| match terms {
            Some(v) => {
                for (k, yk) in y.iter_mut().enumerate() {
                    *yk += v[first + k];
                }
            }
            None => unseen = true,
        };
        add(self.donor[s.donor]);
        add(self.acceptor[s.acceptor]);
        if let Some(b) = s.bridge {
            add(self.bridge[b]);
            if let Some(sl) = self.slopes[b] {
                for (k, yk) in y.iter_mut().enumerate() {
                    for (j, &f) in BRIDGE_SLOPE_FEATURES.iter().enumerate() {
                        *yk += sl[first + k][j] * x[f];
                    }
                }
            }
        }
        (y, unseen)
    }

    /// (S1, ΔEST, f, unseen fragment) from a tuple's descriptors and summary.
    #[inline]
    pub fn predict_descriptors(
        &self,
        x: &[f64; N_FEATURES],
        s: &TupleSummary,
    ) -> (f64, f64, f64, bool) {
        if s.class == TupleClass::Dimer {
            let v = &s.dimer.v;
            return (v.s1_ev, v.delta_est_ev.max(0.0), v.f_s1.max(0.0), false);
        }
        let (y, unseen) = self.raw::<3>(x, s, 0);
        let d = ((y[1] * std::f64::consts::LN_10).exp() - DEST_OFFSET_EV).max(0.0);
        let f = ((y[2] * std::f64::consts::LN_10).exp() - F_FLOOR).max(0.0);
        (y[0], d, f, unseen)
    }

    /// The fast estimate of `t`, or None when it has no donor–acceptor path. No allocation.
    #[inline]
    pub fn predict(&self, cards: &CardSet, t: &Tuple) -> Option<FastEstimate> {
        let mut x = [0.0; N_FEATURES];
        let s = describe(cards, t, &mut x)?;
        let (s1, d, f, unseen) = self.predict_descriptors(&x, &s);
        let (score, _) = self.score_descriptors(&x, &s);
        Some(FastEstimate {
            s1_ev: s1,
            t1_ev: s1 - d,
            delta_est_ev: d,
            f_s1: f,
            merit: crate::photophysics::log10_tadf_rate(
                s1,
                d,
                f,
                self.refractive_index,
                self.temperature_k,
            ),
            score,
            gap_ev: s.gap_ev,
            coupling: s.coupling,
            mixing: s.mixing,
            twist_deg: s.twist_deg,
            unseen_fragment: unseen,
        })
    }
}
