//! Gradient-boosted oblivious regression trees (least squares): the screen score's correction
//! on top of its ridge part.
//!
//! An oblivious tree asks the same question — descriptor `f_k` above threshold `t_k` — of every
//! node at depth k, so a tree of depth D is D comparisons whose answers, read as bits, index
//! one of 2^D leaves: no branches to mispredict. A forest is evaluated through a bit mask per
//! tuple built from one threshold count per descriptor (`SplitMasks`), or, when its trees ask
//! about a few descriptors at few thresholds, through a table ([`Table`]). Boosting by least
//! squares (Friedman, Ann. Statist. 29, 1189 (2001)) fits each tree to the residuals of the
//! ones before, shrunk by a learning rate; the symmetric form is that of Prokhorenkova et al.,
//! NeurIPS 2018. Splits are chosen exactly over candidate thresholds at quantiles of each
//! descriptor (midpoints between neighbouring distinct values), leaves are the shrunk,
//! L2-regularised mean residual. Deterministic: ties go to the lower descriptor index and the
//! lower threshold.

use serde::{Deserialize, Serialize};

/// Depth of every tree (16 leaves).
pub const DEPTH: usize = 4;
const LEAVES: usize = 1 << DEPTH;

/// One oblivious tree: the leaf index is `Σ_k [x[features[k]] > thresholds[k]]·2^k`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Tree {
    pub features: [usize; DEPTH],
    pub thresholds: [f64; DEPTH],
    pub leaves: [f64; LEAVES],
}

impl Tree {
    #[inline]
    pub fn leaf(&self, x: &[f64]) -> usize {
        let mut idx = 0;
        for k in 0..DEPTH {
            idx |= usize::from(x[self.features[k]] > self.thresholds[k]) << k;
        }
        idx
    }
}

/// Settings of a boosting run.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BoostParams {
    pub trees: usize,
    pub learning_rate: f64,
    /// L2 penalty on a leaf's value (in rows: a leaf of n rows is shrunk by n/(n + l2)).
    pub l2: f64,
    /// Candidate thresholds per descriptor, at most.
    pub thresholds: usize,
}

/// Candidate thresholds of one descriptor: midpoints between neighbouring distinct values, at
/// most `max` of them, spread over the quantiles.
fn candidates(values: &mut [f64], max: usize) -> Vec<f64> {
    values.sort_by(f64::total_cmp);
    let mut distinct: Vec<f64> = Vec::new();
    for &v in values.iter() {
        if distinct.last().is_none_or(|&l| v > l) {
            distinct.push(v);
        }
    }
    if distinct.len() < 2 {
        return Vec::new();
    }
    let n = distinct.len() - 1;
    let mut out: Vec<f64> = (0..max.min(n))
        .map(|k| {
            let i = (k * n) / max.min(n);
            0.5 * (distinct[i] + distinct[i + 1])
        })
        .collect();
    out.dedup();
    out
}

/// A grown tree: its final gain, splits and each row's leaf.
type Grown = (f64, [usize; DEPTH], [f64; DEPTH], Vec<usize>);

/// Fit trees to `y` − `init` on `rows` (descriptor vectors). Each tree splits only on the
/// descriptors of one of `groups`: every round grows the best tree within each group and keeps
/// the one that lowers the squared error most (ties: the earlier group). One group of every
/// descriptor is plain boosting; small groups make forests that tabulate ([`Forest::new`]).
/// Returns the trees; a row's prediction is `init` + Σ leaves.
pub fn boost(
    rows: &[&[f64]],
    y: &[f64],
    init: &[f64],
    groups: &[Vec<usize>],
    p: &BoostParams,
) -> Vec<Tree> {
    let n = rows.len();
    assert_eq!(y.len(), n);
    assert_eq!(init.len(), n);
    // Candidate thresholds and each row's bin, once per descriptor of any group.
    let mut allowed: Vec<usize> = groups.iter().flatten().copied().collect();
    allowed.sort_unstable();
    allowed.dedup();
    let cand: Vec<Vec<f64>> = allowed
        .iter()
        .map(|&f| {
            let mut v: Vec<f64> = rows.iter().map(|r| r[f]).collect();
            candidates(&mut v, p.thresholds)
        })
        .collect();
    let bins: Vec<Vec<u16>> = allowed
        .iter()
        .zip(&cand)
        .map(|(&f, c)| {
            rows.iter()
                .map(|r| c.partition_point(|&t| r[f] > t) as u16)
                .collect()
        })
        .collect();
    let members: Vec<Vec<usize>> = groups
        .iter()
        .map(|g| {
            let mut m: Vec<usize> = g
                .iter()
                .map(|f| allowed.binary_search(f).expect("collected"))
                .collect();
            m.sort_unstable();
            m.dedup();
            m
        })
        .collect();
    // Grow one oblivious tree on the descriptors `member` (indices into `allowed`): its final
    // gain (Σ over leaves of sum²/(count + l2)), splits and each row's leaf.
    let grow = |member: &[usize], resid: &[f64]| {
        let mut leaf_of = vec![0usize; n];
        let mut features = [0usize; DEPTH];
        let mut thresholds = [f64::INFINITY; DEPTH];
        let mut gain_final = 0.0;
        for level in 0..DEPTH {
            let groups = 1 << level;
            let mut best: Option<(f64, usize, usize)> = None;
            for &a in member {
                let c = &cand[a];
                if c.is_empty() {
                    continue;
                }
                let nb = c.len() + 1;
                let mut sum = vec![0.0; groups * nb];
                let mut cnt = vec![0.0; groups * nb];
                for i in 0..n {
                    let k = leaf_of[i] * nb + bins[a][i] as usize;
                    sum[k] += resid[i];
                    cnt[k] += 1.0;
                }
                let tot: Vec<(f64, f64)> = (0..groups)
                    .map(|g| {
                        let s = &sum[g * nb..(g + 1) * nb];
                        let c = &cnt[g * nb..(g + 1) * nb];
                        (s.iter().sum(), c.iter().sum())
                    })
                    .collect();
                let mut left = vec![(0.0, 0.0); groups];
                for b in 0..c.len() {
                    let mut gain = 0.0;
                    for g in 0..groups {
                        left[g].0 += sum[g * nb + b];
                        left[g].1 += cnt[g * nb + b];
                        let (sl, nl) = left[g];
                        let (sr, nr) = (tot[g].0 - sl, tot[g].1 - nl);
                        gain += sl * sl / (nl + p.l2) + sr * sr / (nr + p.l2);
                    }
                    if best.is_none_or(|(g, _, _)| gain > g + 1e-12) {
                        best = Some((gain, a, b));
                    }
                }
            }
            let Some((gain, a, b)) = best else {
                break;
            };
            gain_final = gain;
            features[level] = allowed[a];
            thresholds[level] = cand[a][b];
            for i in 0..n {
                leaf_of[i] |= usize::from(bins[a][i] as usize > b) << level;
            }
        }
        (gain_final, features, thresholds, leaf_of)
    };
    let mut pred = init.to_vec();
    let mut trees = Vec::with_capacity(p.trees);
    for _ in 0..p.trees {
        let resid: Vec<f64> = y.iter().zip(&pred).map(|(a, b)| a - b).collect();
        let mut best = None;
        for m in &members {
            let g = grow(m, &resid);
            if best.as_ref().is_none_or(|b: &Grown| g.0 > b.0 + 1e-12) {
                best = Some(g);
            }
        }
        let Some((_, features, thresholds, leaf_of)) = best else {
            break;
        };
        let mut s = [0.0; LEAVES];
        let mut c = [0.0; LEAVES];
        for i in 0..n {
            s[leaf_of[i]] += resid[i];
            c[leaf_of[i]] += 1.0;
        }
        let mut leaves = [0.0; LEAVES];
        for k in 0..LEAVES {
            leaves[k] = p.learning_rate * s[k] / (c[k] + p.l2);
        }
        for i in 0..n {
            pred[i] += leaves[leaf_of[i]];
        }
        trees.push(Tree {
            features,
            thresholds,
            leaves,
        });
    }
    trees
}

/// Σ of the trees' leaves for `x`.
#[inline]
pub fn predict(trees: &[Tree], x: &[f64]) -> f64 {
    trees.iter().map(|t| t.leaves[t.leaf(x)]).sum()
}

/// The threshold grid of a set of trees: the descriptors their finite splits ask about
/// (ascending), each descriptor's distinct finite thresholds (ascending), and every split as
/// (slot in the descriptor list, rank of its threshold), None for a split with an infinite
/// threshold (a tree that stopped early: it never goes right). A split goes right exactly
/// when the count of its descriptor's thresholds below the value exceeds its rank.
struct Grid {
    features: Vec<usize>,
    thresholds: Vec<Vec<f64>>,
    splits: Vec<[Option<(usize, usize)>; DEPTH]>,
}

impl Grid {
    fn new(trees: &[Tree]) -> Grid {
        let finite = || {
            trees.iter().flat_map(|t| {
                t.features
                    .iter()
                    .zip(&t.thresholds)
                    .filter(|(_, t)| t.is_finite())
                    .map(|(&f, &t)| (f, t))
            })
        };
        let mut features: Vec<usize> = finite().map(|(f, _)| f).collect();
        features.sort_unstable();
        features.dedup();
        let thresholds: Vec<Vec<f64>> = features
            .iter()
            .map(|&f| {
                let mut v: Vec<f64> = finite().filter(|s| s.0 == f).map(|s| s.1).collect();
                v.sort_by(f64::total_cmp);
                v.dedup();
                v
            })
            .collect();
        let rank = |f: usize, t: f64| {
            let k = features.binary_search(&f).expect("collected");
            let r = thresholds[k]
                .binary_search_by(|a| a.total_cmp(&t))
                .expect("collected");
            (k, r)
        };
        let splits = trees
            .iter()
            .map(|t| {
                std::array::from_fn(|d| {
                    t.thresholds[d]
                        .is_finite()
                        .then(|| rank(t.features[d], t.thresholds[d]))
                })
            })
            .collect();
        Grid {
            features,
            thresholds,
            splits,
        }
    }
}

/// Most cells a forest is tabulated into: one f32 each, 512 KiB, within the L2 cache of a
/// current x86 core (a choice of this tool; a larger forest is evaluated tree by tree).
pub const MAX_TABLE_CELLS: usize = 1 << 17;

/// A forest tabulated on the grid its thresholds cut: a forest that asks about few
/// descriptors, each at few thresholds, is a piecewise-constant function of the bins those
/// thresholds make, so its value is one table look-up after counting, per descriptor, the
/// thresholds below the value. The same numbers as summing the trees (up to single-precision
/// rounding of the sum, below 10⁻⁶ for sums of order one), at the cost of a few comparisons
/// instead of `DEPTH` per tree.
#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    /// The descriptors the trees ask about, ascending.
    features: Vec<usize>,
    /// Per descriptor: how its thresholds below a value are counted.
    counters: Vec<Counter>,
    /// Cell index step per descriptor (row-major over `features`).
    strides: Vec<usize>,
    cells: Vec<f32>,
}

impl Table {
    /// Tabulate `trees`; None when the grid would exceed [`MAX_TABLE_CELLS`] cells.
    pub fn compile(trees: &[Tree]) -> Option<Table> {
        let Grid {
            features,
            thresholds: sorted,
            splits: coded,
        } = Grid::new(trees);
        let mut n_cells = 1usize;
        let mut strides = vec![0; features.len()];
        for (k, v) in sorted.iter().enumerate().rev() {
            strides[k] = n_cells;
            n_cells = n_cells.checked_mul(v.len() + 1)?;
            if n_cells > MAX_TABLE_CELLS {
                return None;
            }
        }
        let mut bins = vec![0usize; features.len()];
        let cells = (0..n_cells)
            .map(|c| {
                for (k, b) in bins.iter_mut().enumerate() {
                    *b = (c / strides[k]) % (sorted[k].len() + 1);
                }
                let sum: f64 = trees
                    .iter()
                    .zip(&coded)
                    .map(|(t, code)| {
                        let mut idx = 0;
                        for (d, s) in code.iter().enumerate() {
                            if let Some((k, r)) = *s {
                                idx |= usize::from(bins[k] > r) << d;
                            }
                        }
                        t.leaves[idx]
                    })
                    .sum();
                sum as f32
            })
            .collect();
        Some(Table {
            features,
            counters: sorted.into_iter().map(Counter::new).collect(),
            strides,
            cells,
        })
    }

    /// Number of cells.
    pub fn len(&self) -> usize {
        self.cells.len()
    }

    pub fn is_empty(&self) -> bool {
        self.cells.is_empty()
    }

    /// The forest's value at descriptors `x`.
    #[inline]
    pub fn value(&self, x: &[f64]) -> f64 {
        let mut i = 0;
        for ((&f, counter), &s) in self.features.iter().zip(&self.counters).zip(&self.strides) {
            i += counter.below(x[f]) * s;
        }
        f64::from(self.cells[i])
    }
}

/// A fitted forest as the hot path evaluates it: the trees of each descriptor group tabulated
/// where they fit a table, the rest summed tree by tree.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Forest {
    tables: Vec<Table>,
    /// The trees not tabulated, in masks of at most [`MASK_TREES`] trees.
    masks: Vec<SplitMasks>,
}

/// Trees evaluated through one bit mask per tuple: bit 4·t + k says whether tree t's split
/// at depth k goes right. A descriptor's splits go right exactly for its thresholds below the
/// value, so counting those thresholds ([`Counter`]) picks one precomputed row of bits per
/// descriptor, and the rows OR-ed together are the mask. Each byte of the mask is
/// then the leaf indices of two trees, and one table per byte holds the two trees' leaves
/// summed for every value of the byte. Per tuple that is one count and one row per
/// descriptor asked about and one look-up per two trees, instead of four dependent
/// comparisons per tree. The same leaves as [`Tree::leaf`].
#[derive(Debug, Clone, PartialEq, Default)]
pub(crate) struct SplitMasks {
    /// Per descriptor asked about: its index, how its thresholds below a value are counted,
    /// and the first of its rows in `rows` (one row per count of thresholds below).
    features: Vec<(usize, Counter, usize)>,
    rows: Vec<Mask>,
    /// Per mask byte (two trees), the sum of the two trees' leaves for each value of the
    /// byte, in integer multiples of `unit` (integer adds chain in one cycle and need no
    /// shuffles; the unit is the finest power of two at which no sum can overflow, about
    /// 10⁻⁸ for leaves of order one, far below the 10⁻² at which the order matters).
    pairs: Vec<[i32; 256]>,
    unit: f64,
    n_trees: usize,
    /// The first mask word of the trees asking about a late descriptor ([`Forest::new`]):
    /// the words before it hold only the other trees, so the late descriptors' rows are zero
    /// there. The number of words in use when no tree is late (or the order did not fit).
    late_word: usize,
}

/// Most trees a mask holds; more are split into several masks.
const MASK_TREES: usize = 256;
/// u64 words of a mask (four bits a tree). Rows are always this wide, so OR-ing one is a
/// fixed number of vector instructions.
pub(crate) const MASK_WORDS: usize = MASK_TREES * DEPTH / 64;
pub(crate) type Mask = [u64; MASK_WORDS];

/// Counts a descriptor's thresholds below a value in a few instructions: a uniform grid of
/// cells over the thresholds' range gives, per cell, a lower bound of the count (the
/// thresholds below the cell before it, so a value a rounding away from a cell edge is still
/// bounded), and a fixed number of branch-free steps up the sorted thresholds finishes it
/// (the most thresholds any three neighbouring cells hold). The grid starts at 64 cells and
/// is doubled until two steps suffice or it has [`MAX_CELLS`] (both choices of this tool). Exactly the count of `t < v` for every value,
/// NaN (0) and ±∞ included.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Counter {
    lo: f64,
    /// Cells per unit of the descriptor (0 for a single threshold: one cell).
    scale: f64,
    /// Per cell (0..=last), the lower bound of the count.
    start: Vec<u16>,
    /// The thresholds ascending, then +∞ (a step never runs past it).
    thresholds: Vec<f64>,
    steps: usize,
}

/// Most cells of a [`Counter`]'s grid (a choice of this tool: 8 KiB of bounds a descriptor).
const MAX_CELLS: usize = 4096;

impl Counter {
    /// `thresholds`: distinct, finite, ascending, at least one and fewer than 65,535.
    fn new(thresholds: Vec<f64>) -> Counter {
        let n = thresholds.len();
        assert!(n >= 1 && n < usize::from(u16::MAX));
        let (lo, hi) = (thresholds[0], thresholds[n - 1]);
        let count_below = |v: f64| thresholds.partition_point(|&t| t < v);
        let mut best = None;
        let mut cells = 64;
        while n > 1 && hi > lo && cells <= MAX_CELLS {
            let scale = cells as f64 / (hi - lo);
            let edge = |c: usize| lo + c as f64 / scale;
            let start: Vec<u16> = (0..=cells)
                .map(|c| {
                    if c == 0 {
                        0
                    } else {
                        count_below(edge(c - 1)) as u16
                    }
                })
                .collect();
            let steps = (0..=cells)
                .map(|c| {
                    let upper = if c + 2 > cells {
                        n
                    } else {
                        count_below(edge(c + 2))
                    };
                    upper - usize::from(start[c])
                })
                .max()
                .expect("at least one cell");
            best = Some((scale, start, steps));
            if steps <= 2 {
                break;
            }
            cells *= 2;
        }
        let (scale, start, steps) = best.unwrap_or((0.0, vec![0], n));
        let mut thresholds = thresholds;
        thresholds.push(f64::INFINITY);
        Counter {
            lo,
            scale,
            start,
            thresholds,
            steps,
        }
    }

    /// The count of thresholds below `v`.
    #[inline(always)]
    pub(crate) fn below(&self, v: f64) -> usize {
        // `as` saturates: below the grid (and NaN) cell 0, above it the last cell. A scale of
        // 0 makes every value cell 0 (∞·0 is NaN, which also goes to 0).
        let c = (((v - self.lo) * self.scale) as usize).min(self.start.len() - 1);
        let mut b = usize::from(self.start[c]);
        for _ in 0..self.steps {
            b += usize::from(v > self.thresholds[b]);
        }
        b
    }
}

/// `mask |= row`, word by word (a fixed count the compiler turns into vector ORs).
#[inline(always)]
pub(crate) fn or_into(mask: &mut Mask, row: &Mask) {
    for i in 0..MASK_WORDS {
        mask[i] |= row[i];
    }
}

/// Trees a mask word holds.
const WORD_TREES: usize = 64 / DEPTH;

impl SplitMasks {
    /// The trees asking about any descriptor of `late` go after the others, from a fresh mask
    /// word (the rest of the last word of the others holds empty trees: no splits, zero
    /// leaves), when that still fits one mask; otherwise the trees stay in their order.
    fn new(trees: &[Tree], late: &[usize]) -> SplitMasks {
        assert!(trees.len() <= MASK_TREES);
        let n_trees = trees.len();
        let is_late = |t: &Tree| {
            t.features
                .iter()
                .zip(&t.thresholds)
                .any(|(f, th)| th.is_finite() && late.contains(f))
        };
        let (late_trees, early): (Vec<&Tree>, Vec<&Tree>) = trees.iter().partition(|t| is_late(t));
        let late_word = early.len().div_ceil(WORD_TREES);
        let empty = Tree {
            features: [0; DEPTH],
            thresholds: [f64::INFINITY; DEPTH],
            leaves: [0.0; LEAVES],
        };
        let (ordered, late_word): (Vec<Tree>, usize) =
            if late_word * WORD_TREES + late_trees.len() <= MASK_TREES {
                let mut v: Vec<Tree> = early.into_iter().cloned().collect();
                v.resize(late_word * WORD_TREES, empty);
                v.extend(late_trees.into_iter().cloned());
                (v, late_word)
            } else {
                (trees.to_vec(), trees.len().div_ceil(WORD_TREES))
            };
        let trees = ordered.as_slice();
        let grid = Grid::new(trees);
        let mut features = Vec::with_capacity(grid.features.len());
        let mut rows = Vec::new();
        for (slot, (&f, v)) in grid.features.iter().zip(grid.thresholds).enumerate() {
            let first_row = rows.len();
            for below in 0..=v.len() {
                let mut row = [0u64; MASK_WORDS];
                for (ti, code) in grid.splits.iter().enumerate() {
                    for (k, s) in code.iter().enumerate() {
                        if matches!(*s, Some((sk, r)) if sk == slot && r < below) {
                            let bit = DEPTH * ti + k;
                            row[bit / 64] |= 1 << (bit % 64);
                        }
                    }
                }
                rows.push(row);
            }
            features.push((f, Counter::new(v), first_row));
        }
        // The row of a descriptor no tree asks about ([`Self::first_row`]).
        rows.push([0; MASK_WORDS]);
        let leaf = |t: usize, idx: usize| trees.get(t).map_or(0.0, |t| t.leaves[idx]);
        // Whole words of tables (a missing tree's leaves are zero), so the sum below runs
        // eight fixed look-ups a word.
        let sums: Vec<[f64; 256]> = (0..trees.len().div_ceil(16) * 8)
            .map(|b| {
                std::array::from_fn(|byte| {
                    leaf(2 * b, byte & (LEAVES - 1)) + leaf(2 * b + 1, byte >> DEPTH)
                })
            })
            .collect();
        // The largest sum of |pair| over the bytes bounds every partial sum.
        let bound: f64 = sums
            .iter()
            .map(|t| t.iter().fold(0.0f64, |m, v| m.max(v.abs())))
            .sum();
        // The finest power of two at which every partial sum stays within i32::MAX / 2.
        let unit = if bound > 0.0 {
            (bound / f64::from(i32::MAX / 2)).log2().ceil().exp2()
        } else {
            1.0
        };
        let pairs = sums
            .iter()
            .map(|t| t.map(|v| (v / unit).round() as i32))
            .collect();
        SplitMasks {
            features,
            rows,
            pairs,
            unit,
            n_trees,
            late_word,
        }
    }

    /// The row of descriptor slot `k` (a position in `features`) at value `v`.
    #[inline(always)]
    pub(crate) fn row(&self, k: usize, v: f64) -> &Mask {
        self.row_at(k, self.count(k, v))
    }

    /// The slot of descriptor `f` (None: no tree asks about it).
    pub(crate) fn slot(&self, f: usize) -> Option<usize> {
        self.features.iter().position(|s| s.0 == f)
    }

    /// The count of slot `k`'s thresholds below `v`. Counts grow with the value, so the count
    /// of a minimum is the minimum of the counts.
    #[inline(always)]
    pub(crate) fn count(&self, k: usize, v: f64) -> usize {
        self.features[k].1.below(v)
    }

    /// Every row, slot by slot ([`Self::first_row`]).
    #[inline(always)]
    pub(crate) fn rows(&self) -> &[Mask] {
        &self.rows
    }

    /// The index in [`Self::rows`] of slot `k`'s row for a count of 0, the row for count c
    /// c places on; for None (a descriptor no tree asks about), a row of no splits.
    pub(crate) fn first_row(&self, k: Option<usize>) -> usize {
        k.map_or(self.rows.len() - 1, |k| self.features[k].2)
    }

    /// The number of slot `k`'s thresholds (the largest count).
    pub(crate) fn n_thresholds(&self, k: usize) -> usize {
        self.features[k].1.thresholds.len() - 1
    }

    /// Slot `k`'s threshold counter.
    pub(crate) fn counter(&self, k: usize) -> &Counter {
        &self.features[k].1
    }

    /// The row of slot `k` for a count of thresholds below ([`Self::count`]).
    #[inline(always)]
    pub(crate) fn row_at(&self, k: usize, count: usize) -> &Mask {
        &self.rows[self.features[k].2 + count]
    }

    #[inline]
    fn value(&self, x: &[f64]) -> f64 {
        let mut mask = [0u64; MASK_WORDS];
        for (k, (f, _, _)) in self.features.iter().enumerate() {
            or_into(&mut mask, self.row(k, x[*f]));
        }
        self.leaf_sum(&mask)
    }

    /// The rows of the descriptors `values` (index, value) OR-ed together: part of a mask
    /// computed ahead, for descriptors that come as a group from one source (a descriptor
    /// no tree asks about adds nothing).
    pub(crate) fn rows_of(&self, values: &[(usize, f64)]) -> Mask {
        let mut mask = [0u64; MASK_WORDS];
        for &(f, v) in values {
            if let Some(k) = self.slot(f) {
                or_into(&mut mask, self.row(k, v));
            }
        }
        mask
    }

    /// The slots (positions in the descriptor list) of the descriptors asked about that are
    /// not in `covered`.
    pub(crate) fn slots_except(&self, covered: &[usize]) -> Vec<usize> {
        (0..self.features.len())
            .filter(|&k| !covered.contains(&self.features[k].0))
            .collect()
    }

    /// The trees' sum when `pre` holds the rows of every descriptor outside `slots`
    /// ([`Self::rows_of`]): only the descriptors of `slots` are counted from `x`. The same
    /// value as [`Self::value`] (the same mask).
    #[inline]
    pub(crate) fn value_with(&self, x: &[f64], pre: &Mask, slots: &[usize]) -> f64 {
        let mut mask = *pre;
        for &k in slots {
            or_into(&mut mask, self.row(k, x[self.features[k].0]));
        }
        self.leaf_sum(&mask)
    }

    /// Σ of the trees' leaves for a mask ([`Self::partial_sum`] over every word).
    #[inline(always)]
    pub(crate) fn leaf_sum(&self, mask: &Mask) -> f64 {
        self.value_of(self.partial_sum(&[mask], 0, self.words()))
    }

    /// Mask words in use (every tree's bits lie in them).
    #[inline(always)]
    pub(crate) fn words(&self) -> usize {
        self.pairs.len() / 8
    }

    /// The first word of the late trees ([`Forest::new`]); the words before it hold only the
    /// other trees.
    pub(crate) fn late_word(&self) -> usize {
        self.late_word
    }

    /// The leaves of the trees in mask words `from..to` summed, in integer units
    /// ([`Self::value_of`]), for the mask that is `rows` OR-ed: each word OR-ed in one pass
    /// over the rows (it stays in a register) and stored as bytes, then one table look-up
    /// per byte into two integer partial sums (independent chains the CPU overlaps). Sums over disjoint word
    /// ranges add up (wrapping, in integers) to the sum over their union exactly.
    #[inline(always)]
    pub(crate) fn partial_sum<const N: usize>(
        &self,
        rows: &[&Mask; N],
        from: usize,
        to: usize,
    ) -> i32 {
        let to = to.min(self.words()).min(MASK_WORDS);
        let from = from.min(to);
        // The OR-ed words stored as bytes first: a byte load each, where reading the bytes
        // out of a register costs a shift each.
        let mut bytes = [0u8; MASK_WORDS * 8];
        for w in from..to {
            let word = rows.iter().fold(0, |acc, r| acc | r[w]);
            bytes[8 * w..8 * w + 8].copy_from_slice(&word.to_le_bytes());
        }
        let mut acc = [0i32; 2];
        let tables = &self.pairs[8 * from..8 * to];
        for (k, (&b, t)) in bytes[8 * from..8 * to].iter().zip(tables).enumerate() {
            // No overflow: |Σ| ≤ i32::MAX / 2 by the choice of unit (plus half a unit of
            // rounding per byte).
            acc[k & 1] = acc[k & 1].wrapping_add(t[usize::from(b)]);
        }
        acc[0].wrapping_add(acc[1])
    }

    /// A sum of leaves in integer units ([`Self::partial_sum`]) as a value.
    #[inline(always)]
    pub(crate) fn value_of(&self, sum: i32) -> f64 {
        f64::from(sum) * self.unit
    }
}

impl Forest {
    /// Each tree goes to the first of `groups` holding all its descriptors; each group's trees
    /// are tabulated when they fit a table ([`Table::compile`]). Trees of no group, and groups
    /// too large to tabulate, are kept as trees, those asking about a descriptor of `late`
    /// after the others in their mask (from a fresh mask word: `SplitMasks::late_word`).
    /// The value is the same sum either way (up to the rounding of the integer leaf units).
    pub fn new(trees: &[Tree], groups: &[Vec<usize>], late: &[usize]) -> Forest {
        let mut parts: Vec<Vec<Tree>> = vec![Vec::new(); groups.len()];
        let mut rest = Vec::new();
        for t in trees {
            let used = |g: &Vec<usize>| {
                t.features
                    .iter()
                    .zip(&t.thresholds)
                    .all(|(f, th)| !th.is_finite() || g.contains(f))
            };
            match groups.iter().position(used) {
                Some(k) => parts[k].push(t.clone()),
                None => rest.push(t.clone()),
            }
        }
        let mut tables = Vec::new();
        for part in parts.into_iter().filter(|p| !p.is_empty()) {
            match Table::compile(&part) {
                Some(t) => tables.push(t),
                None => rest.extend(part),
            }
        }
        Forest {
            tables,
            masks: rest
                .chunks(MASK_TREES)
                .map(|c| SplitMasks::new(c, late))
                .collect(),
        }
    }

    /// The tables (one per tabulated group).
    pub fn tables(&self) -> &[Table] {
        &self.tables
    }

    /// The forest's split masks when they are all of it (no tables, at most [`MASK_TREES`]
    /// trees): the form whose masks can be partly computed ahead
    /// ([`SplitMasks::value_with`]).
    pub(crate) fn single_masks(&self) -> Option<&SplitMasks> {
        match (self.tables.is_empty(), self.masks.as_slice()) {
            (true, [m]) => Some(m),
            _ => None,
        }
    }

    /// Whether the forest has no trees (its value is 0 everywhere).
    pub fn is_empty(&self) -> bool {
        self.tables.is_empty() && self.n_trees() == 0
    }

    /// A value the forest never falls below: each table's least cell and, per mask, the
    /// least entry of each byte's table summed in the masks' integer units: the trees' least
    /// leaves summed, which trees asking about the same descriptors need not reach together.
    pub fn lower_bound(&self) -> f64 {
        self.tables
            .iter()
            .map(|t| {
                t.cells
                    .iter()
                    .fold(f64::INFINITY, |m, &c| m.min(f64::from(c)))
            })
            .sum::<f64>()
            + self
                .masks
                .iter()
                .map(|m| {
                    let least = m.pairs.iter().map(|t| t.iter().min().copied().unwrap_or(0));
                    m.value_of(least.fold(0i32, i32::wrapping_add))
                })
                .sum::<f64>()
    }

    /// Number of trees not tabulated (evaluated through the split masks).
    pub fn n_trees(&self) -> usize {
        self.masks.iter().map(|m| m.n_trees).sum()
    }

    #[inline]
    pub fn value(&self, x: &[f64]) -> f64 {
        self.tables.iter().map(|t| t.value(x)).sum::<f64>()
            + self.masks.iter().map(|m| m.value(x)).sum::<f64>()
    }
}

/// The project's seeded generator for synthetic test data.
#[cfg(test)]
#[path = "../../tests/support/splitmix.rs"]
mod splitmix;

#[cfg(test)]
mod tests {
    use super::*;

    /// The trees' least leaves summed: what a forest of independent trees could fall to.
    fn least_leaves(trees: &[Tree]) -> f64 {
        trees
            .iter()
            .map(|t| t.leaves.iter().fold(f64::INFINITY, |m, &v| m.min(v)))
            .sum()
    }

    /// 400 rows of five seeded uniform descriptors, their targets by `f`, and the generator
    /// to draw more from.
    fn seeded(
        seed: u64,
        f: impl Fn(&[f64]) -> f64,
    ) -> (Vec<Vec<f64>>, Vec<f64>, impl FnMut() -> f64) {
        let mut rng = splitmix::Rng(seed);
        let mut next = move || rng.unit();
        let rows: Vec<Vec<f64>> = (0..400).map(|_| (0..5).map(|_| next()).collect()).collect();
        let y = rows.iter().map(|r| f(r)).collect();
        (rows, y, next)
    }

    /// A forest tabulated per group gives the trees' own sum everywhere: at random points,
    /// exactly at every threshold (x > t is false there, for the table as for the tree), off
    /// the grid on either side, and at NaN (every comparison false). The forest is boosted on
    /// seeded random data with two groups of two descriptors, plus a tree outside both groups.
    #[test]
    fn a_tabulated_forest_is_its_trees() {
        let (rows, y, mut next) = seeded(20261202, |r| {
            (6.0 * r[1]).sin() * r[2] + (r[3] - 0.5).abs() * r[4]
        });
        let refs: Vec<&[f64]> = rows.iter().map(|r| r.as_slice()).collect();
        let p = BoostParams {
            trees: 40,
            learning_rate: 0.3,
            l2: 1.0,
            thresholds: 15,
        };
        let groups = vec![vec![1, 2], vec![3, 4]];
        let mut trees = boost(&refs, &y, &vec![0.0; 400], &groups, &p);
        assert!(trees.iter().any(|t| t.features.contains(&1)));
        assert!(trees.iter().any(|t| t.features.contains(&4)));
        // A tree on no group's descriptors stays a tree.
        trees.push(Tree {
            features: [0, 1, 3, 0],
            thresholds: [0.5, 0.25, 0.75, f64::INFINITY],
            leaves: std::array::from_fn(|k| k as f64 * 0.01),
        });
        let forest = Forest::new(&trees, &groups, &[]);
        assert_eq!(forest.tables().len(), 2);
        assert_eq!(forest.n_trees(), 1);
        let mut points: Vec<Vec<f64>> = (0..2000)
            .map(|_| (0..5).map(|_| next() * 1.2 - 0.1).collect())
            .collect();
        for t in &trees {
            for (&f, &th) in t.features.iter().zip(&t.thresholds) {
                if th.is_finite() {
                    for v in [th, th - 1e-12, th + 1e-12] {
                        let mut x: Vec<f64> = (0..5).map(|_| next()).collect();
                        x[f] = v;
                        points.push(x);
                    }
                }
            }
        }
        points.push(vec![f64::NAN; 5]);
        // The lower bound (the screen score's gate gives it to tuples below the gate) holds
        // at every point, tables and masks together, and is no slacker than the trees' least
        // leaves summed (a table's least cell is its group's least sum).
        let (lb, least) = (forest.lower_bound(), least_leaves(&trees));
        assert!(lb >= least - 1e-6, "{lb} vs {least}");
        for x in &points {
            let (a, b) = (forest.value(x), predict(&trees, x));
            assert!((a - b).abs() < 1e-6, "{a} vs {b} at {x:?}");
            assert!(a >= lb, "{a} below the bound {lb} at {x:?}");
        }
        // A group too large for a table is evaluated tree by tree, to the same sum.
        let wide = boost(
            &refs,
            &y,
            &vec![0.0; 400],
            &[vec![0, 1, 2, 3, 4]],
            &BoostParams {
                thresholds: 64,
                ..p
            },
        );
        let f = Forest::new(&wide, &[vec![0, 1, 2, 3, 4]], &[]);
        assert!(f.tables().is_empty() && f.n_trees() == wide.len());
        for x in &points {
            let (a, b) = (f.value(x), predict(&wide, x));
            assert!((a - b).abs() < 1e-5, "{a} vs {b} at {x:?}");
        }
    }

    /// Trees asking about a late descriptor go after the others, from a fresh mask word:
    /// the late descriptor's rows have no bits before that word, the other trees' bits are
    /// all before it, and the forest still sums its trees (at random points and at NaN).
    #[test]
    fn late_trees_go_last_in_the_mask() {
        let (rows, y, mut next) = seeded(20261204, |r| {
            (5.0 * r[0]).sin() + r[3] * r[4] + (r[1] - 0.5).abs()
        });
        let refs: Vec<&[f64]> = rows.iter().map(|r| r.as_slice()).collect();
        let p = BoostParams {
            trees: 60,
            learning_rate: 0.3,
            l2: 1.0,
            thresholds: 15,
        };
        let trees = boost(&refs, &y, &vec![0.0; 400], &[vec![0, 1, 2, 3, 4]], &p);
        let late = |t: &Tree| {
            t.features
                .iter()
                .zip(&t.thresholds)
                .any(|(&f, th)| f == 3 && th.is_finite())
        };
        let n_late = trees.iter().filter(|t| late(t)).count();
        assert!(n_late > 0 && n_late < trees.len(), "{n_late} late trees");
        let forest = Forest::new(&trees, &[], &[3]);
        let m = forest.single_masks().expect("one mask");
        let lw = m.late_word();
        assert_eq!(lw, (trees.len() - n_late).div_ceil(WORD_TREES));
        assert_eq!(m.words(), lw + n_late.div_ceil(WORD_TREES));
        for k in 0..m.features.len() {
            let f = m.features[k].0;
            for c in 0..=m.n_thresholds(k) {
                let row = m.row_at(k, c);
                if f == 3 {
                    assert!(row[..lw].iter().all(|&w| w == 0), "descriptor 3, count {c}");
                }
                assert!(row[m.words()..].iter().all(|&w| w == 0));
            }
        }
        // The early words hold the early trees' splits: some descriptor other than 3 sets
        // bits there, and the partial sums add up to the whole.
        assert!(
            (0..m.features.len())
                .any(|k| m.row_at(k, m.n_thresholds(k))[..lw].iter().any(|&w| w != 0))
        );
        let mut points: Vec<Vec<f64>> = (0..2000)
            .map(|_| (0..5).map(|_| next() * 1.2 - 0.1).collect())
            .collect();
        points.push(vec![f64::NAN; 5]);
        // Split masks alone: the bound is the trees' least leaves summed (two trees a byte,
        // indexed independently), up to the integer units' rounding.
        let (lb, least) = (forest.lower_bound(), least_leaves(&trees));
        assert!((lb - least).abs() < 1e-6, "{lb} vs {least}");
        assert_eq!(Forest::default().lower_bound(), 0.0);
        for x in &points {
            let (a, b) = (forest.value(x), predict(&trees, x));
            assert!((a - b).abs() < 1e-6, "{a} vs {b} at {x:?}");
            assert!(a >= lb, "{a} below the bound {lb} at {x:?}");
            let mut mask = [0u64; MASK_WORDS];
            for (k, (f, _, _)) in m.features.iter().enumerate() {
                or_into(&mut mask, m.row(k, x[*f]));
            }
            let (early, late) = (
                m.partial_sum(&[&mask], 0, lw),
                m.partial_sum(&[&mask], lw, m.words()),
            );
            assert_eq!(m.value_of(early.wrapping_add(late)), m.leaf_sum(&mask));
        }
    }

    /// The grid counter gives the count of thresholds below a value exactly (against a
    /// binary search of the sorted thresholds): at every threshold and the floats either side
    /// of it, at random values inside and outside the range, at NaN and ±∞; for spread,
    /// clustered (thresholds a few ulps apart, more than the grid can separate) and single
    /// thresholds.
    #[test]
    fn the_grid_counter_counts_thresholds_below() {
        let mut rng = splitmix::Rng(20261203);
        let mut next = move || rng.unit();
        let spread: Vec<f64> = (0..40).map(|k| k as f64 * 0.37 + 0.05 * next()).collect();
        let mut clustered: Vec<f64> = (0..20)
            .map(|k| 1.0 + f64::EPSILON * 4.0 * k as f64)
            .collect();
        clustered.extend([-3.0, 0.5, 7.25, 1e3]);
        clustered.sort_by(f64::total_cmp);
        let mut uneven: Vec<f64> = (0..63).map(|_| (next() * 12.0).exp() - 50.0).collect();
        uneven.sort_by(f64::total_cmp);
        uneven.dedup();
        for thresholds in [spread, clustered, uneven, vec![0.25]] {
            let c = Counter::new(thresholds.clone());
            let truth = |v: f64| thresholds.partition_point(|&t| t < v);
            let mut values = vec![
                f64::NAN,
                f64::INFINITY,
                f64::NEG_INFINITY,
                0.0,
                -1e300,
                1e300,
            ];
            for &t in &thresholds {
                values.extend([t, t.next_up(), t.next_down(), t + 1e-9, t - 1e-9]);
            }
            let (lo, hi) = (thresholds[0], thresholds[thresholds.len() - 1]);
            values.extend((0..5000).map(|_| lo - 1.0 + (hi - lo + 2.0) * next()));
            for v in values {
                // NaN: no threshold is below it (every comparison false).
                let want = if v.is_nan() { 0 } else { truth(v) };
                assert_eq!(
                    c.below(v),
                    want,
                    "{v} among {} thresholds",
                    thresholds.len()
                );
            }
        }
    }

    /// A step in one descriptor among noise descriptors: the first split finds the step's
    /// descriptor and a threshold between the two levels, and boosting drives the residual
    /// towards zero.
    #[test]
    fn boosting_finds_a_step() {
        let rows: Vec<Vec<f64>> = (0..200)
            .map(|i| {
                let a = i as f64 / 200.0;
                vec![1.0, ((i * 37) % 200) as f64, a, ((i * 91) % 13) as f64]
            })
            .collect();
        let y: Vec<f64> = rows
            .iter()
            .map(|r| if r[2] > 0.3 { 2.0 } else { -1.0 })
            .collect();
        let refs: Vec<&[f64]> = rows.iter().map(|r| r.as_slice()).collect();
        let p = BoostParams {
            trees: 30,
            learning_rate: 0.5,
            l2: 0.0,
            thresholds: 256,
        };
        let trees = boost(&refs, &y, &vec![0.0; 200], &[vec![1, 2, 3]], &p);
        assert_eq!(trees[0].features[0], 2);
        assert!(trees[0].thresholds[0] > 0.3 && trees[0].thresholds[0] < 0.305);
        let err: f64 = refs
            .iter()
            .zip(&y)
            .map(|(r, t)| (predict(&trees, r) - t).abs())
            .fold(0.0, f64::max);
        assert!(err < 0.01, "{err}");
    }
}
