//! The cascade's hot path: the screen score of every tuple of an enumeration's stream, from
//! records of the arms kept for a core's whole run.
//!
//! A tuple's screen score ([`BoundModel::score`]) is a sum whose parts each depend on few of
//! the tuple's arms: the best donor–acceptor path's descriptors (one arm), the best dimer's
//! and its halves' descriptors (one arm, a pair-table entry and two more), and a handful of
//! descriptors aggregated over the arms (minima, a count, a sum, a second-lowest value).
//! An enumeration runs through each core's tuples in one stretch, and a core's arms recur
//! for every tuple of it: the shipped library's 2.4·10^6 tuples of every architecture
//! have 36,057 distinct (core, site, arm) triples in 102 runs of one core
//! (`cargo run --release --example screen_records`). So each triple gets a `Record` once
//! per run of its core, holding what it contributes as the best path (its share of the
//! linear part, its fragment terms, its trees' split rows) and as the best dimer (its share
//! of the linear and quadratic parts, its split rows, its exact score as a D–A dimer).
//!
//! A tuple's records are folded site by site (`Fold`: minima, the best path, the best
//! dimer, the path count and Σ mixing²) and the folds kept, so a tuple that changes only its
//! last arm (88 % of that enumeration) folds one record. Then nine aggregated descriptors
//! and a few products give the ridge part. A tuple whose ridge part is below the model's
//! gate ([`BoundModel::gate`]; 87 % of that enumeration) is done: it takes the least the
//! trees can give. The others are refined by the trees, in two parts: the trees asking
//! about a sum over the arms sit last in the mask (`SplitMasks::late_word`) and are summed
//! for every refined tuple (two words of the mask); the others' leaves are fixed by a
//! `MemoKey` (the best path and best dimer records, the lowest local S1 and four threshold
//! counts), so their integer sum is kept per key for the run of the core (89 % of that
//! enumeration's refined tuples find it; an enumeration of short runs finds few).
//!
//! The result is the score of [`BoundModel::score_stream`] up to the order of floating-point
//! additions (the same descriptors, the same trees' mask, so the same leaves; tested over
//! every architecture). A model bound at a temperature other than the score's, or whose trees
//! are in another form, is scored through the descriptors ([`Describer`]) instead.

use super::cards::CardSet;
use super::features::{
    self, BRIDGE_SLOPE_FEATURES, DIMER_FEATURES, Describer, HALF_FEATURES, HINGES, LN_PATHS,
    LOCAL_S1_MIN, LOCAL_T1_MIN, MIXING_SQ_SUM, N_FEATURES, PAIR_S1_MIN, PAIR_S1_SECOND_GAP,
    PAIR_T1_MIN, PATH_FEATURES, Path,
};
use super::model::{BoundModel, EntryMasks, N_PRODUCT_FEATURES, PRODUCT_FIRST};
use super::trees::{Counter, Mask, SplitMasks, or_into};
use crate::combine::{Arm, Tuple};

/// The descriptors aggregated over a tuple's arms, in the order of the screener's sums.
const AGG: [usize; 9] = [
    LN_PATHS,
    MIXING_SQ_SUM,
    LOCAL_T1_MIN,
    LOCAL_S1_MIN,
    HINGES[0],
    HINGES[1],
    PAIR_S1_MIN,
    PAIR_T1_MIN,
    PAIR_S1_SECOND_GAP,
];
/// The position of descriptor `f` in [`AGG`] (evaluated at compile time).
const fn at(f: usize) -> usize {
    let mut i = 0;
    while i < AGG.len() {
        if AGG[i] == f {
            return i;
        }
        i += 1;
    }
    panic!("not an aggregated descriptor")
}
const AT_LN: usize = at(LN_PATHS);
const AT_MSS: usize = at(MIXING_SQ_SUM);
const AT_H0: usize = at(HINGES[0]);
const AT_H1: usize = at(HINGES[1]);
const AT_GAP2: usize = at(PAIR_S1_SECOND_GAP);
const AT_LOCAL_S1: usize = at(LOCAL_S1_MIN);
const AT_LOCAL_T1: usize = at(LOCAL_T1_MIN);
const AT_PAIR_S1: usize = at(PAIR_S1_MIN);
const AT_PAIR_T1: usize = at(PAIR_T1_MIN);
/// Positions in [`AGG`] of the aggregated descriptors among the products (lowest dimer S1
/// and T1, second-lowest gap); every other product descriptor comes from the best dimer's
/// entries.
const AGG_IN_PRODUCTS: [usize; 3] = [AT_PAIR_S1, AT_PAIR_T1, AT_GAP2];
/// Index of the screen score among the model's targets.
const SCREEN: usize = 3;

/// What one (core, site, arm) contributes to the score as the best path or the best dimer:
/// computed once per run of its core (what the fold reads is its [`Brief`]).
struct Record {
    path: Option<PathPart>,
    /// Some only with a path (an arm's dimer is that of its path).
    dimer: Option<DimerPart>,
}

/// What the fold ([`Fold::with`]) reads of a record, in one compact copy: a tuple folds the
/// records of its changed arms, and their full parts (with two mask rows each) would spread
/// those few values over several cache lines.
#[derive(Clone, Copy)]
struct Brief {
    /// Lowest local S1 and T1 of the arm's fragments, and their counts of the trees'
    /// thresholds below ([`LOCAL_S1_MIN`], [`LOCAL_T1_MIN`]).
    s1: f64,
    t1: f64,
    counts: [u16; 2],
    /// Whether the arm has a path, and whether it has a dimer (then it has a path); the
    /// values below are 0 for what it lacks.
    path: bool,
    dimer: bool,
    /// The path's gap and mixing.
    gap: f64,
    mixing: f64,
    /// The dimer's S1, T1, counts and merit.
    dimer_s1: f64,
    dimer_t1: f64,
    dimer_counts: [u16; 2],
    merit: f64,
}

/// An arm as its tuple's best donor–acceptor path.
struct PathPart {
    /// The path's gap (for the hinges).
    gap: f64,
    bridged: bool,
    /// The linear part's share of the path descriptors (with the constant), the fragment
    /// terms and the bridge slope on the path's coupling.
    linear: f64,
    /// The bridge's slopes on the best dimer's descriptors ([`DIMER_FEATURES`] order).
    dimer_slopes: [f64; 4],
    /// A fragment of the path has no fitted term.
    unseen: bool,
    /// The trees' rows of the path descriptors OR-ed.
    mask: Mask,
}

/// An arm's dimer as its tuple's best dimer (or the table's neutral entry).
struct DimerPart {
    s1: f64,
    t1: f64,
    /// Counts of the trees' thresholds below `s1` and `t1` ([`PAIR_S1_MIN`], [`PAIR_T1_MIN`]).
    counts: [u16; 2],
    merit: f64,
    /// The score of a D–A tuple that is this dimer (its exact π-tier log10 k_TADF).
    exact: f64,
    /// The best dimer's descriptors ([`DIMER_FEATURES`] order), for the bridge slopes.
    values: [f64; 4],
    /// Per class: the linear part's share of the dimer's and halves' descriptors, the
    /// quadratic form over them alone, and the coefficient of each aggregated product
    /// descriptor ([`AGG_IN_PRODUCTS`]) in the cross terms.
    linear: [f64; 2],
    quad: [f64; 2],
    cross: [[f64; 3]; 2],
    /// The trees' rows of the dimer's and halves' descriptors OR-ed.
    mask: Mask,
}

/// What a tuple's arms give, folded site by site: the minima, the best path and the best
/// dimer (record indices), the path count and the sum over paths.
#[derive(Clone, Copy)]
struct Fold {
    /// Lowest local S1 and T1 (the core's and the arms' fragments') and their counts.
    s1: f64,
    t1: f64,
    local: [u16; 2],
    /// The best path's record (u32::MAX: none yet), with its gap and mixing.
    best: u32,
    best_gap: f64,
    best_mixing: f64,
    n_paths: u32,
    mixing_sq_sum: f64,
    /// The record of the best dimer by merit (u32::MAX: none yet), with its merit.
    dimer: u32,
    dimer_merit: f64,
    /// Lowest and second-lowest dimer S1, lowest dimer T1, and the counts of the lowest.
    ps1: f64,
    second: f64,
    pt1: f64,
    pair: [u16; 2],
}

impl Fold {
    fn start((s1, t1, local): (f64, f64, [u16; 2])) -> Fold {
        Fold {
            s1,
            t1,
            local,
            best: u32::MAX,
            best_gap: f64::INFINITY,
            best_mixing: 0.0,
            n_paths: 0,
            mixing_sq_sum: 0.0,
            dimer: u32::MAX,
            dimer_merit: f64::NEG_INFINITY,
            ps1: f64::INFINITY,
            second: f64::INFINITY,
            pt1: f64::INFINITY,
            pair: [u16::MAX; 2],
        }
    }

    /// This fold with record `r` (index `i`) of the next arm.
    #[inline(always)]
    fn with(mut self, r: &Brief, i: u32) -> Fold {
        if r.s1 < self.s1 {
            self.s1 = r.s1;
        }
        if r.t1 < self.t1 {
            self.t1 = r.t1;
        }
        self.local = [
            self.local[0].min(r.counts[0]),
            self.local[1].min(r.counts[1]),
        ];
        if !r.path {
            return self;
        }
        if r.dimer {
            features::push_lowest(r.dimer_s1, &mut self.ps1, &mut self.second);
            self.pt1 = self.pt1.min(r.dimer_t1);
            self.pair = [
                self.pair[0].min(r.dimer_counts[0]),
                self.pair[1].min(r.dimer_counts[1]),
            ];
            // The first dimer, then strictly better ones.
            if self.dimer == u32::MAX || r.merit > self.dimer_merit {
                (self.dimer, self.dimer_merit) = (i, r.merit);
            }
        }
        self.n_paths += 1;
        self.mixing_sq_sum += r.mixing * r.mixing;
        if self.best == u32::MAX
            || features::better_path(r.gap, r.mixing, self.best_gap, self.best_mixing)
        {
            (self.best, self.best_gap, self.best_mixing) = (i, r.gap, r.mixing);
        }
        self
    }
}

/// The bound model's parts in the screener's form.
struct Parts<'a> {
    /// Per class, the screen coefficients of [`AGG`].
    agg: [[f64; 9]; 2],
    /// Per class, the quadratic form among the aggregated product descriptors.
    agg_quad: [[[f64; 3]; 3]; 2],
    shift: f64,
    trees: Option<TreeParts<'a>>,
    /// The neutral entry as the best dimer (no arm's dimer known).
    fallback: DimerPart,
}

struct TreeParts<'a> {
    masks: &'a SplitMasks,
    entries: &'a EntryMasks,
    /// Slots of [`PATH_FEATURES`].
    path_slots: [Option<usize>; 8],
    /// Per [`AGG`] descriptor: its threshold counter (None: no tree asks about it), and the
    /// index of its row for a count of 0 in the masks' rows (the row for count c is c
    /// places on; a descriptor no tree asks about has a row of no splits, count 0).
    counters: [Option<&'a Counter>; 9],
    first_row: [usize; 9],
    /// The path count's counts of thresholds below for 0..8 paths.
    ln_counts: Vec<usize>,
    /// Mask words in use, and the first word of the late trees, those asking about a sum
    /// over the arms ([`SplitMasks::late_word`]). The early trees' sum is kept per
    /// [`MemoKey`]; the late trees are summed for every tuple.
    words: usize,
    late_word: usize,
    /// Per [`AGG`] descriptor: whether a late tree asks about it (its count is then needed
    /// for every tuple, not only when the early trees are summed).
    late_asks: [bool; 9],
}

/// Most early-tree sums kept for a run of a core (a choice of this tool: the table then
/// holds 2^19 places of 33 bytes, about 17 MiB; the shipped library's whole enumeration
/// has 285,034 keys over 102 runs). A run with more distinct keys starts its memo afresh
/// when it is full.
const MEMO_CAP: usize = 1 << 18;

/// What fixes the early trees' mask: the best path's and the best dimer's records (the
/// latter `u32::MAX` for the neutral entry), the counts of thresholds below the second
/// dimer gap, the lowest local T1 and the lowest dimer T1 and S1, and the lowest local S1
/// itself (with the best path's gap it fixes the hinges, and it fixes its own count).
/// Every other aggregated descriptor is a sum over the arms, which early trees do not ask
/// about.
#[derive(Clone, Copy, PartialEq, Eq)]
struct MemoKey {
    records: u64,
    counts: u64,
    s1_bits: u64,
}

impl std::hash::Hash for MemoKey {
    #[inline(always)]
    fn hash<H: std::hash::Hasher>(&self, h: &mut H) {
        h.write_u64(self.records);
        h.write_u64(self.counts);
        h.write_u64(self.s1_bits);
    }
}

/// A multiply–fold hash for [`MemoKey`] (the memo's keys are small integers that the
/// default keyed hash spends tens of instructions on; no adversary picks them).
#[derive(Default)]
struct MemoHasher(u64);

impl std::hash::Hasher for MemoHasher {
    #[inline(always)]
    fn write_u64(&mut self, x: u64) {
        // The 128-bit product folded: every input bit reaches the low bits (the table index)
        // and the high bits (the table's tag). The odd constant is 2^64 / φ.
        let p = u128::from(self.0 ^ x) * 0x9E37_79B9_7F4A_7C15;
        self.0 = (p as u64) ^ ((p >> 64) as u64);
    }

    fn write(&mut self, bytes: &[u8]) {
        for c in bytes.chunks(8) {
            let mut w = [0u8; 8];
            w[..c.len()].copy_from_slice(c);
            self.write_u64(u64::from_le_bytes(w));
        }
    }

    #[inline(always)]
    fn finish(&self) -> u64 {
        self.0
    }
}

type Memo = std::collections::HashMap<MemoKey, i32, std::hash::BuildHasherDefault<MemoHasher>>;

/// Per site, where each arm's record is: the generation it was made in and its index.
#[derive(Default)]
struct SiteSlots {
    /// Hydrogen (0) and one-site fragments (1 + index).
    direct: Vec<u64>,
    /// Per bridge and core-side site (2·bridge + site), per terminal; allocated on first use.
    bridged: Vec<Vec<u64>>,
}

/// Scores a stream of tuples (see the module's documentation). One per screen run; no
/// allocation per tuple once a core's arms are recorded.
pub struct Screener<'a> {
    model: &'a BoundModel,
    cards: &'a CardSet,
    parts: Option<Parts<'a>>,
    describer: Describer<'a>,
    cache: Cache,
}

/// The records of the current run of a core.
struct Cache {
    key: Option<(usize, bool)>,
    generation: u32,
    slots: Vec<SiteSlots>,
    records: Vec<Record>,
    /// Each record's [`Brief`], by the same index.
    briefs: Vec<Brief>,
    /// The records of the current tuple's arms, with the arms (a Vec: its length and
    /// indexing cost less than an inline vector's, and it grows once).
    current: Vec<(Arm, u32)>,
    /// `folds[k]`: the core folded with the records of the current tuple's first k arms.
    /// A stream mostly changes a tuple's last arm (88 % of the shipped library's
    /// enumeration), so a tuple mostly folds one record onto the fold before it.
    folds: Vec<Fold>,
    /// The core's local S1 and T1 with their counts.
    core: (f64, f64, [u16; 2]),
    made: u64,
    /// The early trees' sums (integer leaf units) of this run of the core, by key.
    memo: Memo,
    memo_hits: u64,
    memo_misses: u64,
    /// Tuples whose trees were summed (their ridge part reached the gate).
    refined: u64,
}

impl<'a> Screener<'a> {
    pub fn new(model: &'a BoundModel, cards: &'a CardSet) -> Screener<'a> {
        Screener {
            model,
            cards,
            parts: Parts::new(model, cards),
            describer: Describer::new(cards),
            cache: Cache {
                key: None,
                generation: 0,
                slots: Vec::new(),
                records: Vec::new(),
                briefs: Vec::new(),
                current: Vec::new(),
                folds: Vec::new(),
                core: (f64::INFINITY, f64::INFINITY, [0; 2]),
                made: 0,
                memo: Memo::default(),
                memo_hits: 0,
                memo_misses: 0,
                refined: 0,
            },
        }
    }

    /// Whether tuples are scored from arm records (false: through the descriptors).
    pub fn uses_records(&self) -> bool {
        self.parts.is_some()
    }

    /// Arm records made so far (one per (core, site, arm) per run of its core).
    pub fn records_made(&self) -> u64 {
        self.cache.made
    }

    /// Tuples whose early trees' sum was found in the memo, and those that summed them.
    pub fn memo_counts(&self) -> (u64, u64) {
        (self.cache.memo_hits, self.cache.memo_misses)
    }

    /// Tuples whose trees were summed: their ridge part reached the model's gate
    /// ([`BoundModel::gate`]). None when tuples are scored through the descriptors, which
    /// do not count them.
    pub fn refined(&self) -> Option<u64> {
        self.parts.is_some().then_some(self.cache.refined)
    }

    /// The screen score of `t` and whether a fragment was outside the fit: the numbers of
    /// [`BoundModel::score`]. None when `t` has no donor–acceptor path.
    #[inline]
    pub fn score(&mut self, t: &Tuple) -> Option<(f64, bool)> {
        let Some(parts) = &self.parts else {
            return self.model.score_stream(&mut self.describer, t);
        };
        self.cache.sync(t, self.cards, self.model, parts);
        let Cache {
            records,
            folds,
            memo,
            memo_hits,
            memo_misses,
            refined,
            ..
        } = &mut self.cache;
        let f = *folds.last()?;
        let (s1, t1, local, n_paths) = (f.s1, f.t1, f.local, f.n_paths as usize);
        let (mut ps1, second, mut pt1, mut pair) = (f.ps1, f.second, f.pt1, f.pair);
        let mixing_sq_sum = f.mixing_sq_sum;
        let bi = f.best;
        let b = records.get(bi as usize)?.path.as_ref()?;
        let (d, di) = match records.get(f.dimer as usize).and_then(|r| r.dimer.as_ref()) {
            // One direct arm with a known dimer: the tuple is its dimer.
            Some(d) if !b.bridged && n_paths == 1 => return Some((d.exact, false)),
            Some(d) => (d, f.dimer),
            None => {
                let f = &parts.fallback;
                (ps1, pt1, pair) = (f.s1, f.t1, f.counts);
                (f, u32::MAX)
            }
        };
        let c = usize::from(!b.bridged);
        let h = features::hinges(b.gap, s1);
        let gap2 = features::second_gap(second, ps1);
        // In [`AGG`] order.
        let xa = [
            features::ln_paths(n_paths),
            mixing_sq_sum,
            t1,
            s1,
            h[0],
            h[1],
            ps1,
            pt1,
            gap2,
        ];
        let mut y = b.linear + d.linear[c];
        for (w, v) in parts.agg[c].iter().zip(&xa) {
            y += w * v;
        }
        for (w, v) in b.dimer_slopes.iter().zip(&d.values) {
            y += w * v;
        }
        if self.model.products {
            let za = AGG_IN_PRODUCTS.map(|k| xa[k]);
            y += d.quad[c];
            for a in 0..3 {
                let mut row = d.cross[c][a];
                for (q, z) in parts.agg_quad[c][a].iter().zip(&za) {
                    row += q * z;
                }
                y += za[a] * row;
            }
        }
        match &parts.trees {
            None => {}
            Some(_) if y < self.model.gate => y += self.model.tree_floor,
            Some(tp) => {
                *refined += 1;
                let m = tp.masks;
                let rows = m.rows();
                let count = |a: usize| tp.counters[a].map_or(0, |c| c.below(xa[a]));
                // Counts of thresholds below, in [`AGG`] order; the hinges' only when a late
                // tree asks about them (otherwise when the early trees are summed).
                let mut counts = [0usize; 9];
                counts[AT_LN] = match tp.ln_counts.get(n_paths) {
                    Some(&c) => c,
                    None => count(AT_LN),
                };
                counts[AT_MSS] = count(AT_MSS);
                counts[AT_GAP2] = count(AT_GAP2);
                counts[AT_LOCAL_T1] = usize::from(local[1]);
                counts[AT_LOCAL_S1] = usize::from(local[0]);
                counts[AT_PAIR_T1] = usize::from(pair[1]);
                counts[AT_PAIR_S1] = usize::from(pair[0]);
                for a in [AT_H0, AT_H1] {
                    if tp.late_asks[a] {
                        counts[a] = count(a);
                    }
                }
                let row = |counts: &[usize; 9], a: usize| &rows[tp.first_row[a] + counts[a]];
                let key = MemoKey {
                    records: u64::from(bi) << 32 | u64::from(di),
                    counts: (counts[AT_GAP2]
                        | counts[AT_LOCAL_T1] << 16
                        | counts[AT_PAIR_T1] << 32
                        | counts[AT_PAIR_S1] << 48) as u64,
                    s1_bits: s1.to_bits(),
                };
                let early = match memo.get(&key) {
                    Some(&v) => {
                        *memo_hits += 1;
                        v
                    }
                    None => {
                        *memo_misses += 1;
                        let mut counts = counts;
                        for a in [AT_H0, AT_H1] {
                            if !tp.late_asks[a] {
                                counts[a] = count(a);
                            }
                        }
                        let early_rows = [
                            &b.mask,
                            &d.mask,
                            row(&counts, AT_H0),
                            row(&counts, AT_H1),
                            row(&counts, AT_GAP2),
                            row(&counts, AT_LOCAL_T1),
                            row(&counts, AT_LOCAL_S1),
                            row(&counts, AT_PAIR_T1),
                            row(&counts, AT_PAIR_S1),
                        ];
                        let v = m.partial_sum(&early_rows, 0, tp.late_word);
                        if memo.len() >= MEMO_CAP {
                            memo.clear();
                        }
                        memo.insert(key, v);
                        v
                    }
                };
                // A descriptor no late tree asks about has count 0 here: its row at 0 has no
                // splits, and its rows have none in the late words anyway.
                let late_rows = [
                    &b.mask,
                    &d.mask,
                    row(&counts, 0),
                    row(&counts, 1),
                    row(&counts, 2),
                    row(&counts, 3),
                    row(&counts, 4),
                    row(&counts, 5),
                    row(&counts, 6),
                    row(&counts, 7),
                    row(&counts, 8),
                ];
                let late = m.partial_sum(&late_rows, tp.late_word, tp.words);
                y += m.value_of(early.wrapping_add(late));
            }
        }
        Some((y + parts.shift, b.unseen))
    }
}

impl Cache {
    /// Point `current` at the records of `t`'s arms, making those not yet recorded for this
    /// run of its core, and fold the records from the first arm that changed.
    #[inline]
    fn sync(&mut self, t: &Tuple, cards: &CardSet, model: &BoundModel, parts: &Parts) {
        let key = (t.core, features::core_is_donor(cards, t));
        if self.key != Some(key) {
            self.key = Some(key);
            self.generation += 1;
            self.records.clear();
            self.briefs.clear();
            self.current.clear();
            // Keys name records of this run.
            self.memo.clear();
            let card = &cards.cards[t.core];
            let counts = local_counts(parts.trees.as_ref(), card.s1_ev, card.t1_ev);
            self.core = (card.s1_ev, card.t1_ev, counts);
            self.folds.clear();
            self.folds.push(Fold::start(self.core));
        }
        let arms = t.arms.as_slice();
        self.current.truncate(arms.len());
        let mut first = arms.len();
        for (site, &arm) in arms.iter().enumerate() {
            if self.current.get(site).is_some_and(|c| c.0 == arm) {
                continue;
            }
            first = first.min(site);
            let i = self.record_of(key, site, arm, cards, model, parts);
            if site < self.current.len() {
                self.current[site] = (arm, i);
            } else {
                self.current.push((arm, i));
            }
        }
        // folds[k] folds the first k arms: those from the first changed arm are refolded.
        self.folds.truncate(first + 1);
        for &(_, i) in &self.current[first..] {
            let next = self.folds[self.folds.len() - 1].with(&self.briefs[i as usize], i);
            self.folds.push(next);
        }
    }

    /// The index of the record of `arm` at `site` in this run of the core, made if new.
    #[inline(always)]
    fn record_of(
        &mut self,
        key: (usize, bool),
        site: usize,
        arm: Arm,
        cards: &CardSet,
        model: &BoundModel,
        parts: &Parts,
    ) -> u32 {
        let generation = u64::from(self.generation) << 32;
        let slot = slot_of(&mut self.slots, cards.cards.len(), site, arm);
        if *slot & !u64::from(u32::MAX) == generation {
            return *slot as u32;
        }
        let i = self.records.len() as u32;
        *slot = generation | u64::from(i);
        self.make(key, site, arm, cards, model, parts);
        i
    }

    /// Records `arm` at `site` (once per run of the core: kept out of the hot path).
    #[cold]
    #[inline(never)]
    fn make(
        &mut self,
        (core, core_is_donor): (usize, bool),
        site: usize,
        arm: Arm,
        cards: &CardSet,
        model: &BoundModel,
        parts: &Parts,
    ) {
        let r = features::arm_record(cards, core, core_is_donor, site, arm);
        let trees = parts.trees.as_ref();
        let record = Record {
            path: r.path.map(|p| path_part(model, trees, &p)),
            dimer: r
                .dimer
                .map(|k| dimer_part(model, cards, trees, Some(k), r.halves)),
        };
        let (gap, mixing) = r.path.map_or((0.0, 0.0), |p| (p.gap, p.mixing));
        let dimer = record.dimer.as_ref().filter(|_| r.path.is_some());
        let (dimer_s1, dimer_t1, dimer_counts, merit) =
            dimer.map_or((0.0, 0.0, [0; 2], 0.0), |d| (d.s1, d.t1, d.counts, d.merit));
        self.briefs.push(Brief {
            s1: r.s1,
            t1: r.t1,
            counts: local_counts(trees, r.s1, r.t1),
            path: r.path.is_some(),
            dimer: dimer.is_some(),
            gap,
            mixing,
            dimer_s1,
            dimer_t1,
            dimer_counts,
            merit,
        });
        self.records.push(record);
        self.made += 1;
    }
}

/// Where the record of `arm` at `site` is noted (`n` fragments), allocated on first use.
#[inline(always)]
fn slot_of(slots: &mut Vec<SiteSlots>, n: usize, site: usize, arm: Arm) -> &mut u64 {
    if slots.len() <= site {
        grow(slots, site);
    }
    let s = &mut slots[site];
    match arm {
        Arm::H | Arm::Terminal(_) => {
            if s.direct.is_empty() {
                s.direct = vec![0; n + 1];
            }
            let i = if let Arm::Terminal(f) = arm { 1 + f } else { 0 };
            &mut s.direct[i]
        }
        Arm::Bridged {
            bridge,
            core_site,
            terminal,
        } => {
            let k = 2 * bridge + usize::from(core_site);
            if s.bridged.get(k).is_none_or(|r| r.is_empty()) {
                allocate_bridged(s, n, k);
            }
            &mut s.bridged[k][terminal]
        }
    }
}

/// Slot tables for sites up to `site`.
#[cold]
fn grow(slots: &mut Vec<SiteSlots>, site: usize) {
    slots.resize_with(site + 1, SiteSlots::default);
}

/// The slot row of bridge-and-side `k` at a site (and the site's rows, on its first bridge).
#[cold]
fn allocate_bridged(s: &mut SiteSlots, n: usize, k: usize) {
    if s.bridged.is_empty() {
        s.bridged = vec![Vec::new(); 2 * n];
    }
    s.bridged[k] = vec![0; n];
}

/// Counts of the trees' thresholds below a local S1 and T1.
fn local_counts(trees: Option<&TreeParts>, s1: f64, t1: f64) -> [u16; 2] {
    trees.map_or([0; 2], |tp| {
        counts(tp, [(AT_LOCAL_S1, s1), (AT_LOCAL_T1, t1)])
    })
}

/// Counts below `values` of the [`AGG`] descriptors at the given positions (0 for a
/// descriptor no tree asks about).
fn counts(tp: &TreeParts, values: [(usize, f64); 2]) -> [u16; 2] {
    values.map(|(a, v)| tp.counters[a].map_or(0, |c| c.below(v) as u16))
}

impl<'a> Parts<'a> {
    /// None when the model is not in the form the records serve: bound at a temperature
    /// other than the screen score's, or trees not in one set of split masks with per-entry
    /// rows. (The descriptor layout the records assume is fixed at compile time and tested:
    /// `the_descriptor_layout_splits_as_the_records_assume`.)
    fn new(model: &'a BoundModel, cards: &CardSet) -> Option<Parts<'a>> {
        let shift = model.screen_shift?;
        let trees = match model.entry_masked_trees() {
            Some((masks, entries)) => {
                let slots = AGG.map(|f| masks.slot(f));
                let counters = slots.map(|k| k.map(|k| masks.counter(k)));
                let ln_counts = match slots[AT_LN] {
                    Some(k) => (0..=8)
                        .map(|n| masks.count(k, features::ln_paths(n)))
                        .collect(),
                    None => Vec::new(),
                };
                let (words, late_word) = (masks.words(), masks.late_word());
                let late_asks = slots.map(|k| {
                    k.is_some_and(|k| {
                        (0..=masks.n_thresholds(k))
                            .any(|c| masks.row_at(k, c)[late_word..words].iter().any(|&w| w != 0))
                    })
                });
                Some(TreeParts {
                    masks,
                    entries,
                    path_slots: PATH_FEATURES.map(|f| masks.slot(f)),
                    counters,
                    first_row: slots.map(|k| masks.first_row(k)),
                    ln_counts,
                    words,
                    late_word,
                    late_asks,
                })
            }
            None if model.forest().is_empty() => None,
            None => return None,
        };
        let mut agg_quad = [[[0.0; 3]; 3]; 2];
        for (c, aq) in agg_quad.iter_mut().enumerate() {
            for (a, row) in aq.iter_mut().enumerate() {
                for (b, v) in row.iter_mut().enumerate() {
                    let (i, j) = (
                        AGG[AGG_IN_PRODUCTS[a]] - PRODUCT_FIRST,
                        AGG[AGG_IN_PRODUCTS[b]] - PRODUCT_FIRST,
                    );
                    *v = model.q[c][i][j];
                }
            }
        }
        let fallback = dimer_part(model, cards, trees.as_ref(), None, None);
        let parts = Parts {
            agg: std::array::from_fn(|c| AGG.map(|f| model.w[c][SCREEN][f])),
            agg_quad,
            shift,
            trees,
            fallback,
        };
        Some(parts)
    }
}

/// A path's part (class from its bridge: bridged or several direct arms).
fn path_part(model: &BoundModel, trees: Option<&TreeParts>, p: &Path) -> PathPart {
    let c = usize::from(p.bridge.is_none());
    let v = features::path_descriptors(p);
    let w = &model.w[c][SCREEN];
    let mut linear = 0.0;
    for (&f, x) in PATH_FEATURES.iter().zip(&v) {
        linear += w[f] * x;
    }
    let mut unseen = false;
    let mut term = |t: Option<super::model::Terms>| match t {
        Some(t) => linear += t[SCREEN],
        None => unseen = true,
    };
    term(model.donor[p.donor]);
    term(model.acceptor[p.acceptor]);
    let mut dimer_slopes = [0.0; 4];
    if let Some(b) = p.bridge {
        term(model.bridge[b]);
        if let Some(sl) = model.slopes[b] {
            for (k, f) in BRIDGE_SLOPE_FEATURES.iter().enumerate() {
                if let Some(i) = PATH_FEATURES.iter().position(|g| g == f) {
                    linear += sl[SCREEN][k] * v[i];
                } else if let Some(i) = DIMER_FEATURES.iter().position(|g| g == f) {
                    dimer_slopes[i] += sl[SCREEN][k];
                }
            }
        }
    }
    let mut mask = [0; super::trees::MASK_WORDS];
    if let Some(tp) = trees {
        for (slot, x) in tp.path_slots.iter().zip(v) {
            if let Some(k) = *slot {
                or_into(&mut mask, tp.masks.row(k, x));
            }
        }
    }
    PathPart {
        gap: p.gap,
        bridged: p.bridge.is_some(),
        linear,
        dimer_slopes,
        unseen,
        mask,
    }
}

/// A dimer's part: pair-table `entry` (None: the neutral entry) with a bridged arm's
/// `halves` (None: a direct arm).
fn dimer_part(
    model: &BoundModel,
    cards: &CardSet,
    trees: Option<&TreeParts>,
    entry: Option<u32>,
    halves: Option<(u32, u32)>,
) -> DimerPart {
    let e = entry.map_or(&cards.pair_fallback, |k| {
        &cards.pair_table.entries[k as usize]
    });
    // The entry descriptors in place, every other descriptor zero.
    let mut x = [0.0; N_FEATURES];
    let values = features::dimer_descriptors(e);
    for (&f, v) in DIMER_FEATURES.iter().zip(values) {
        x[f] = v;
    }
    if let Some((db, ba)) = halves {
        for (fs, k) in HALF_FEATURES.iter().zip([db, ba]) {
            for (&f, v) in fs.iter().zip(features::half_descriptors(cards, k)) {
                x[f] = v;
            }
        }
    }
    let z = &x[PRODUCT_FIRST..];
    let mut linear = [0.0; 2];
    let mut quad = [0.0; 2];
    let mut cross = [[0.0; 3]; 2];
    for c in 0..2 {
        linear[c] = model.w[c][SCREEN].iter().zip(&x).map(|(w, v)| w * v).sum();
        if model.products {
            // Q is upper triangular (j ≥ i).
            let q = &model.q[c];
            for i in 0..N_PRODUCT_FEATURES {
                let row: f64 = (i..N_PRODUCT_FEATURES).map(|j| q[i][j] * z[j]).sum();
                quad[c] += z[i] * row;
            }
            for (a, &k) in AGG_IN_PRODUCTS.iter().enumerate() {
                let i = AGG[k] - PRODUCT_FIRST;
                cross[c][a] = (0..i).map(|j| q[j][i] * z[j]).sum::<f64>()
                    + (i..N_PRODUCT_FEATURES).map(|j| q[i][j] * z[j]).sum::<f64>();
            }
        }
    }
    let mask = match trees {
        Some(tp) => tp.entries.pre(entry, halves),
        None => [0; super::trees::MASK_WORDS],
    };
    let (s1, t1) = (e.v.s1_ev, e.v.t1_ev);
    DimerPart {
        s1,
        t1,
        counts: trees.map_or([0; 2], |tp| {
            counts(tp, [(AT_PAIR_S1, s1), (AT_PAIR_T1, t1)])
        }),
        merit: e.merit,
        exact: model.merit_const + e.log10_s1sq_f - e.v.delta_est_ev.max(0.0) * model.merit_per_ev,
        values,
        linear,
        quad,
        cross,
        mask,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Whether the descriptors split as the records assume: path, dimer, halves and aggregated
    /// descriptors cover every descriptor once, the products are the dimer's, the halves' and
    /// [`AGG_IN_PRODUCTS`], and the bridge slopes fall on path or dimer descriptors.
    fn layout_is_split() -> bool {
        let mut seen = [0u8; N_FEATURES];
        for &f in PATH_FEATURES
            .iter()
            .chain(&DIMER_FEATURES)
            .chain(HALF_FEATURES.iter().flatten())
            .chain(&AGG)
        {
            seen[f] += 1;
        }
        let entry = |f: &usize| {
            DIMER_FEATURES.contains(f) || HALF_FEATURES.iter().flatten().any(|h| h == f)
        };
        seen.iter().all(|&n| n == 1)
            && (PRODUCT_FIRST..N_FEATURES)
                .all(|f| entry(&f) || AGG_IN_PRODUCTS.iter().any(|&a| AGG[a] == f))
            && AGG_IN_PRODUCTS.iter().all(|&a| AGG[a] >= PRODUCT_FIRST)
            && BRIDGE_SLOPE_FEATURES
                .iter()
                .all(|f| PATH_FEATURES.contains(f) || DIMER_FEATURES.contains(f))
    }

    /// The records' split of the descriptors is the descriptors' layout (a descriptor added
    /// or moved without the screener knowing would silently drop out of the score).
    #[test]
    fn the_descriptor_layout_splits_as_the_records_assume() {
        assert!(layout_is_split());
    }
}
