//! Per-tuple descriptors from fragment cards, in O(arms) with no allocation: the donor–acceptor
//! paths of the tuple, their orbital gaps and couplings, the lowest local excitations, and the
//! arms' dimers from the pair table (`super::pairs`).

use super::cards::CardSet;
use super::pairs::PairEntry;
use crate::combine::{Arm, Tuple};
use crate::model::{Architecture, Role};
use smallvec::SmallVec;

/// Number of descriptors (including the constant).
pub const N_FEATURES: usize = 27;

/// Names of the descriptors, in order (for fitted-model files and reports).
pub const FEATURE_NAMES: [&str; N_FEATURES] = [
    "const",
    "gap_ev",
    "mixing",
    "mixing_sq",
    "ln_mixing_sq",
    "gap_x_mixing_sq",
    "ln_paths",
    "mixing_sq_sum",
    "local_t1_min_ev",
    "local_s1_min_ev",
    "bridged",
    "coupling_best",
    "gap_over_local_s1_hinge_low",
    "gap_over_local_s1_hinge_high",
    "pair_s1_min_ev",
    "pair_t1_min_ev",
    "pair_best_delta_est_ev",
    "pair_best_log10_delta_est",
    "pair_best_log10_f",
    "pair_best_merit",
    "pair_s1_second_gap_ev",
    "bridge_db_s1_ev",
    "bridge_db_log10_delta_est",
    "bridge_db_log10_f",
    "bridge_ba_s1_ev",
    "bridge_ba_log10_delta_est",
    "bridge_ba_log10_f",
];

/// Scale of the through-bond coupling (eV): the PPP resonance integral of an aromatic C–C
/// bond, rounded (science.md a.4); only fixes the units of `mixing`, the fit absorbs it.
pub const BETA_SCALE_EV: f64 = 2.4;
/// Smallest energy denominator (eV) in the mixing amplitudes (near-degenerate levels mix
/// strongly, not infinitely; a choice of this tool, the fit absorbs the scale).
pub const MIN_DENOMINATOR_EV: f64 = 0.3;
/// Knots (eV) of the two hinge descriptors on gap − local S1: where the charge-transfer state
/// sinks below the local excitations (knots chosen by this tool inside the library's range of
/// gap − local S1, 1.5–4.5 eV; the fit decides how much each matters).
pub const HINGE_KNOTS_EV: [f64; 2] = [2.5, 3.5];
/// Cap (eV) of the gap between the second-lowest and the lowest dimer S1 over a tuple's arms
/// (the value a single-arm tuple gets: arms further apart than this do not interact in the
/// π tier's CIS; a choice of this tool, a few times the CT couplings of the library).
pub const SECOND_GAP_CAP_EV: f64 = 0.5;

/// Which of the model's forms applies to a tuple.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TupleClass {
    /// One direct donor–acceptor arm with a known dimer: the tuple is its dimer (D–A), so the
    /// pair table's π-tier values are used as they are.
    Dimer,
    /// Donor and acceptor meet through bridges (D–B–A, D–B–A–B–D).
    Bridged,
    /// Several direct arms (D–A–D, A–D–A, Dn–A), or one whose dimer is unknown.
    MultiArm,
}

/// Indices of the descriptors that get a slope per bridge (the bridge changes how the arm's
/// dimer ΔEST, f and the link coupling carry over to the bridged molecule).
pub const BRIDGE_SLOPE_FEATURES: [usize; 3] = [17, 18, 11];

/// What the model needs of one tuple besides the descriptor vector.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TupleSummary {
    /// LUMO(acceptor) − HOMO(donor) of the best path (eV, fragment orbital energies).
    pub gap_ev: f64,
    /// ⟨cos²θ⟩ product along the best path (1 = planar and conjugated, 0 = perpendicular).
    pub coupling: f64,
    /// First-order amplitude of HOMO–LUMO overlap along the best path (dimensionless).
    pub mixing: f64,
    /// Equilibrium twist of the best path's donor-side link (degrees).
    pub twist_deg: f64,
    /// Fragments (library indices) of the best path: donor, acceptor, bridge.
    pub donor: usize,
    pub acceptor: usize,
    pub bridge: Option<usize>,
    pub class: TupleClass,
    /// The best arm's dimer (by its merit): for [`TupleClass::Dimer`] the tuple's own values.
    pub dimer: PairEntry,
    /// Where the pair-table descriptors come from: the best dimer's entry (None: no arm's
    /// dimer is known, the table's neutral entry stands in) and, for a bridged best arm, its
    /// donor–bridge and bridge–acceptor entries (None: a direct arm, zeros).
    pub dimer_entry: Option<u32>,
    pub halves: Option<(u32, u32)>,
}

/// The descriptors taken from the best dimer's entry ([`dimer_descriptors`]).
pub const DIMER_FEATURES: [usize; 4] = [16, 17, 18, 19];
/// The descriptors taken from a bridged best arm's donor–bridge and bridge–acceptor entries
/// ([`half_descriptors`]; zeros for a direct arm).
pub const HALF_FEATURES: [[usize; 3]; 2] = [[21, 22, 23], [24, 25, 26]];

/// The best dimer's descriptors, in [`DIMER_FEATURES`] order.
#[inline(always)]
pub fn dimer_descriptors(e: &PairEntry) -> [f64; 4] {
    [e.v.delta_est_ev, e.log10_delta_est, e.log10_f, e.merit]
}

/// A bridged arm's half-dimer descriptors from its entry (`k`), in [`HALF_FEATURES`] order:
/// the table's neutral entry stands in for an unknown one.
#[inline(always)]
pub fn half_descriptors(cards: &CardSet, k: u32) -> [f64; 3] {
    let e = &cards.pair_table.entries[k as usize];
    let e = if e.is_known() {
        e
    } else {
        &cards.pair_fallback
    };
    [e.v.s1_ev, e.log10_delta_est, e.log10_f]
}

/// The descriptors of the best donor–acceptor path alone (`path_descriptors`; the constant
/// rides with them).
pub const PATH_FEATURES: [usize; 8] = [0, 1, 2, 3, 4, 5, 10, 11];
// The descriptors aggregated over a tuple's arms (indices into the descriptor vector).
/// ln of the path count.
pub const LN_PATHS: usize = 6;
/// Σ mixing² over the paths.
pub const MIXING_SQ_SUM: usize = 7;
/// Lowest local T1 and S1 of the core and the arms' fragments.
pub const LOCAL_T1_MIN: usize = 8;
pub const LOCAL_S1_MIN: usize = 9;
/// The two hinges on the best path's gap − the lowest local S1.
pub const HINGES: [usize; 2] = [12, 13];
/// Lowest S1 and T1 of the arms' known dimers.
pub const PAIR_S1_MIN: usize = 14;
pub const PAIR_T1_MIN: usize = 15;
/// Gap from the lowest to the second-lowest dimer S1.
pub const PAIR_S1_SECOND_GAP: usize = 20;

/// The best path's descriptors, in [`PATH_FEATURES`] order.
#[inline(always)]
pub(super) fn path_descriptors(p: &Path) -> [f64; 8] {
    let m2 = p.mixing * p.mixing;
    [
        1.0,
        p.gap,
        p.mixing,
        m2,
        // Single precision: logf is about twice as fast as log, and the descriptor needs no
        // more than its seven digits.
        f64::from(((m2 + 1e-4) as f32).ln()),
        p.gap * m2,
        if p.bridge.is_some() { 1.0 } else { 0.0 },
        p.coupling,
    ]
}

/// Whether a path of `gap` and `mixing` replaces the best so far: the lowest gap, then (within
/// 10⁻⁹ eV) the larger mixing.
#[inline(always)]
pub(super) fn better_path(gap: f64, mixing: f64, best_gap: f64, best_mixing: f64) -> bool {
    gap < best_gap - 1e-9 || (gap <= best_gap + 1e-9 && mixing > best_mixing)
}

/// Keeps the lowest and second-lowest of the values seen.
#[inline(always)]
pub(super) fn push_lowest(v: f64, lowest: &mut f64, second: &mut f64) {
    if v < *lowest {
        *second = *lowest;
        *lowest = v;
    } else if v < *second {
        *second = v;
    }
}

/// ln of a tuple's path count.
#[inline(always)]
pub(super) fn ln_paths(n: usize) -> f64 {
    LN_SMALL.get(n).copied().unwrap_or((n as f64).ln())
}

/// The two hinges on the best path's gap − the lowest local S1, in [`HINGES`] order.
#[inline(always)]
pub(super) fn hinges(gap: f64, s1_min: f64) -> [f64; 2] {
    let over = gap - s1_min;
    [
        (over - HINGE_KNOTS_EV[0]).max(0.0),
        (over - HINGE_KNOTS_EV[1]).max(0.0),
    ]
}

/// The gap from the lowest to the second-lowest dimer S1, capped.
#[inline(always)]
pub(super) fn second_gap(second: f64, min: f64) -> f64 {
    (second - min).min(SECOND_GAP_CAP_EV)
}

/// ln n for the path counts a tuple can have (no logarithm per tuple).
const LN_SMALL: [f64; 7] = [
    f64::NEG_INFINITY,
    0.0,
    std::f64::consts::LN_2,
    1.098_612_288_668_109_8,
    1.386_294_361_119_890_6,
    1.609_437_912_434_100_3,
    1.791_759_469_228_055,
];

/// One donor–acceptor path.
#[derive(Clone, Copy, PartialEq)]
pub(super) struct Path {
    pub gap: f64,
    pub coupling: f64,
    pub mixing: f64,
    pub twist: f64,
    pub donor: usize,
    pub acceptor: usize,
    pub bridge: Option<usize>,
}

/// What one arm of a tuple contributes, from the card and pair tables alone: computed once
/// per (core, site, arm) and reused while the following tuples keep that arm at that site
/// (an enumeration changes one arm at a time).
#[derive(Clone, Copy)]
pub(super) struct ArmRecord {
    /// Lowest local S1 and T1 of the arm's own fragments (+∞ for a hydrogen cap).
    pub s1: f64,
    pub t1: f64,
    /// The arm's donor–acceptor path; None for a hydrogen cap or roles that never meet.
    pub path: Option<Path>,
    /// The arm's dimer (pair-table entry index) when its values are known (only with a path).
    pub dimer: Option<u32>,
    /// For a bridged arm: its donor–bridge and bridge–acceptor dimers (entry indices, from the
    /// two links' twist-table slots).
    pub halves: Option<(u32, u32)>,
}

/// Whether the core of `t` is the donor side of its paths.
#[inline(always)]
pub fn core_is_donor(cards: &CardSet, t: &Tuple) -> bool {
    t.architecture == Architecture::ADA || cards.cards[t.core].role == Role::Donor
}

/// The record of `arm` at `site` of `core` (`core_is_donor`: the core is the donor side).
pub(super) fn arm_record(
    cards: &CardSet,
    core: usize,
    core_is_donor: bool,
    site: usize,
    arm: Arm,
) -> ArmRecord {
    let mut r = ArmRecord {
        s1: f64::INFINITY,
        t1: f64::INFINITY,
        path: None,
        dimer: None,
        halves: None,
    };
    let mut local = |f: usize| {
        let c = &cards.cards[f];
        if c.s1_ev < r.s1 {
            r.s1 = c.s1_ev;
        }
        if c.t1_ev < r.t1 {
            r.t1 = c.t1_ev;
        }
    };
    // (terminal fragment, ⟨cos²⟩ product, mixing, twist, bridge)
    // (…, the dimer slot of a direct arm's link, the bridged arm's two halves)
    let (terminal, coupling, mixing, twist, bridge, direct, halves) = match arm {
        Arm::H => return r,
        Arm::Terminal(f) => {
            local(f);
            let p = cards.pair(core, site, f, 0);
            let c2 = p.cos2 as f64;
            let (h, l) = (p.mix_homo as f64, p.mix_lumo as f64);
            (f, c2, h + l, p.theta_deg as f64, None, Some(p.dimer), None)
        }
        Arm::Bridged {
            bridge,
            core_site,
            terminal,
        } => {
            local(bridge);
            local(terminal);
            let cs = core_site as usize;
            let a = cards.pair(core, site, bridge, cs);
            let b = cards.pair(bridge, 1 - cs, terminal, 0);
            let (ca, cb) = (a.cos2 as f64, b.cos2 as f64);
            // Hole and electron meet on the bridge (hole leaks onto it across the
            // terminal's link, electron across the core's) or pass it (products of the
            // two links' amplitudes of one kind).
            let (h1, l1) = (b.mix_homo as f64, b.mix_lumo as f64);
            let (h2, l2) = (a.mix_homo as f64, a.mix_lumo as f64);
            let meet = if core_is_donor { l1 * h2 } else { h1 * l2 };
            (
                terminal,
                ca * cb,
                meet + h1 * h2 + l1 * l2,
                b.theta_deg.max(a.theta_deg) as f64,
                Some(bridge),
                None,
                // Donor–bridge and bridge–acceptor: the terminal's link first when the
                // terminal is the donor.
                Some(if core_is_donor {
                    (a.dimer, b.dimer)
                } else {
                    (b.dimer, a.dimer)
                }),
            )
        }
    };
    let term = &cards.cards[terminal];
    let roles_meet = if core_is_donor {
        term.role == Role::Acceptor
    } else {
        term.role == Role::Donor
    };
    if !roles_meet {
        return r;
    }
    let core_card = &cards.cards[core];
    let (homo, lumo) = if core_is_donor {
        (core_card.homo_ev, term.lumo_ev)
    } else {
        (term.homo_ev, core_card.lumo_ev)
    };
    // The arm's dimer: the core site and the terminal's site 1 joined directly (for a
    // bridged arm, the donor–acceptor pair without its bridge).
    let k = match direct {
        Some(k) => k,
        None => {
            let (cs, ts) = (cards.site_offset[core] + site, cards.site_offset[terminal]);
            let n = cards.pair_table.n_sites;
            if core_is_donor {
                cards.pair_table.index[cs * n + ts]
            } else {
                cards.pair_table.index[ts * n + cs]
            }
        }
    };
    r.dimer = cards.pair_table.entries[k as usize].is_known().then_some(k);
    r.halves = halves;
    r.path = Some(Path {
        gap: lumo - homo,
        coupling,
        mixing,
        twist,
        donor: if core_is_donor { core } else { terminal },
        acceptor: if core_is_donor { terminal } else { core },
        bridge,
    });
    r
}

/// Describes tuples one after another, reusing each site's arm record while the next tuple
/// keeps the same core and the same arm at that site. The numbers are those of [`describe`];
/// an enumeration's stream changes one arm at a time, so most arms are looked up once.
pub struct Describer<'a> {
    cards: &'a CardSet,
    /// Core and whether it is the donor side, of the records kept.
    key: Option<(usize, bool)>,
    arms: SmallVec<[Arm; 4]>,
    records: SmallVec<[ArmRecord; 4]>,
}

impl<'a> Describer<'a> {
    pub fn new(cards: &'a CardSet) -> Describer<'a> {
        Describer {
            cards,
            key: None,
            arms: SmallVec::new(),
            records: SmallVec::new(),
        }
    }

    /// Summarise `t` and write its descriptors into `x` (see [`describe`]).
    #[inline]
    pub fn describe(&mut self, t: &Tuple, x: &mut [f64; N_FEATURES]) -> Option<TupleSummary> {
        let cards = self.cards;
        let core_is_donor = core_is_donor(cards, t);
        if self.key != Some((t.core, core_is_donor)) {
            self.key = Some((t.core, core_is_donor));
            self.arms.clear();
            self.records.clear();
        }
        self.arms.truncate(t.arms.len());
        self.records.truncate(t.arms.len());
        for (site, &arm) in t.arms.iter().enumerate() {
            if site < self.arms.len() {
                if self.arms[site] != arm {
                    self.arms[site] = arm;
                    self.records[site] = arm_record(cards, t.core, core_is_donor, site, arm);
                }
            } else {
                self.arms.push(arm);
                self.records
                    .push(arm_record(cards, t.core, core_is_donor, site, arm));
            }
        }
        aggregate(cards, t.core, &self.records, x)
    }
}

/// Summarise `t` and write its descriptors into `x`. Returns None when the tuple has no
/// donor–acceptor path (every arm hydrogen, or roles that never meet). No allocation (for
/// cores of up to four sites). A stream of tuples is faster through a [`Describer`].
pub fn describe(cards: &CardSet, t: &Tuple, x: &mut [f64; N_FEATURES]) -> Option<TupleSummary> {
    Describer::new(cards).describe(t, x)
}

/// The tuple's descriptors from its arms' records.
#[inline]
fn aggregate(
    cards: &CardSet,
    core: usize,
    records: &[ArmRecord],
    x: &mut [f64; N_FEATURES],
) -> Option<TupleSummary> {
    let core = &cards.cards[core];
    let (mut s1_min, mut t1_min) = (core.s1_ev, core.t1_ev);
    let mut best: Option<Path> = None;
    let mut n_paths = 0usize;
    let mut mixing_sq_sum = 0.0;
    // Running statistics of the arms' known dimers.
    let mut pbest: Option<&PairEntry> = None;
    let mut pk: Option<u32> = None;
    let mut phalves: Option<(u32, u32)> = None;
    let (mut ps1_min, mut ps1_second, mut pt1_min) = (f64::INFINITY, f64::INFINITY, f64::INFINITY);
    for r in records {
        if r.s1 < s1_min {
            s1_min = r.s1;
        }
        if r.t1 < t1_min {
            t1_min = r.t1;
        }
        let Some(p) = r.path else {
            continue;
        };
        if let Some(k) = r.dimer {
            let e = &cards.pair_table.entries[k as usize];
            push_lowest(e.v.s1_ev, &mut ps1_min, &mut ps1_second);
            pt1_min = pt1_min.min(e.v.t1_ev);
            if pbest.is_none_or(|b| e.merit > b.merit) {
                pbest = Some(e);
                pk = Some(k);
                phalves = r.halves;
            }
        }
        n_paths += 1;
        mixing_sq_sum += p.mixing * p.mixing;
        best = match best {
            None => Some(p),
            Some(b) if better_path(p.gap, p.mixing, b.gap, b.mixing) => Some(p),
            keep => keep,
        };
    }
    let b = best?;
    // A tuple none of whose dimers is known (failed SCFs) gets the table's neutral entry: the
    // card descriptors alone then order it (the model has no better information).
    let pe = pbest.copied().unwrap_or(cards.pair_fallback);
    if pbest.is_none() {
        ps1_min = pe.v.s1_ev;
        pt1_min = pe.v.t1_ev;
    }
    // Halves of a bridged best arm (unknown ones: the fallback); zeros for a direct arm.
    let (db, ba) = match phalves {
        Some((x, y)) => (half_descriptors(cards, x), half_descriptors(cards, y)),
        None => ([0.0; 3], [0.0; 3]),
    };
    for (&f, v) in PATH_FEATURES.iter().zip(path_descriptors(&b)) {
        x[f] = v;
    }
    for (&f, v) in DIMER_FEATURES.iter().zip(dimer_descriptors(&pe)) {
        x[f] = v;
    }
    for (fs, vs) in HALF_FEATURES.iter().zip([db, ba]) {
        for (&f, v) in fs.iter().zip(vs) {
            x[f] = v;
        }
    }
    x[LN_PATHS] = ln_paths(n_paths);
    x[MIXING_SQ_SUM] = mixing_sq_sum;
    x[LOCAL_T1_MIN] = t1_min;
    x[LOCAL_S1_MIN] = s1_min;
    for (&f, v) in HINGES.iter().zip(hinges(b.gap, s1_min)) {
        x[f] = v;
    }
    x[PAIR_S1_MIN] = ps1_min;
    x[PAIR_T1_MIN] = pt1_min;
    x[PAIR_S1_SECOND_GAP] = second_gap(ps1_second, ps1_min);
    Some(TupleSummary {
        gap_ev: b.gap,
        coupling: b.coupling,
        mixing: b.mixing,
        twist_deg: b.twist,
        donor: b.donor,
        acceptor: b.acceptor,
        bridge: b.bridge,
        class: if b.bridge.is_some() {
            TupleClass::Bridged
        } else if n_paths == 1 && pbest.is_some() {
            TupleClass::Dimer
        } else {
            TupleClass::MultiArm
        },
        dimer: pe,
        dimer_entry: pk,
        halves: phalves,
    })
}
