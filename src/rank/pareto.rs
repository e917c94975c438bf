//! Non-dominated sorting and crowding distance.
//!
//! Objective values come as a row-major matrix `f` of `n × m` values, every column to be
//! minimised (see [`objective_matrix`](super::objective_matrix)); they must not be NaN
//! (the matrix builder turns NaN and missing values into +∞). Point a dominates b when a is no
//! worse in every objective and better in at least one (Deb et al. 2002). Identical points do
//! not dominate each other and share a front.
//!
//! # Algorithms
//!
//! * **One objective**: sort; the front is the rank among distinct values. O(N log N).
//! * **Two objectives**: sort lexicographically by (f1, f2); sweep keeping, per front, the
//!   smallest f2 assigned so far. Every earlier point has f1 no larger, so a point is dominated
//!   by front k exactly when that front's smallest f2 is ≤ its own f2 (identical points are
//!   processed as one group). The per-front minima are non-decreasing in k, so the front of a
//!   point is found by binary search: O(N log N) in total for all fronts. This is the
//!   two-dimensional case of the maxima problem (Kung, Luccio & Preparata, "On finding the
//!   maxima of a set of vectors", J. ACM 22, 469–476 (1975)) extended to all fronts as in
//!   Jensen, "Reducing the run-time complexity of multiobjective EAs: the NSGA-II and other
//!   algorithms", IEEE Trans. Evol. Comput. 7, 503–515 (2003).
//! * **Three or more**: efficient non-dominated sort with binary search over fronts, ENS-BS
//!   (Zhang, Tian, Cheng & Jin, "An efficient approach to nondominated sorting for evolutionary
//!   multiobjective optimization", IEEE Trans. Evol. Comput. 19, 201–213 (2015)): points in
//!   lexicographic order, so a point can only be dominated by earlier ones; a point dominated by
//!   some member of front k is dominated by some member of every front before k (transitivity),
//!   so the first front without a dominator is found by binary search; within a front members
//!   are compared from the last added backwards. O(N log N) sorting plus O(M·N·log F·|front|)
//!   comparisons in the worst case (O(M·N²) when everything is one front); fast when fronts are
//!   small, as in screening data with one dominant trade-off.
//!
//! Crowding distance (Deb et al., IEEE Trans. Evol. Comput. 6, 182–197 (2002)): per front and
//! objective, sort the front (ties by row index); the two boundary points get +∞; an interior
//! point adds (f_{i+1} − f_{i−1}) / (f_max − f_min) over the front's finite values; a gap to a
//! +∞ neighbour counts as +∞; an objective with f_max = f_min adds nothing. O(M·N log N).

use std::cmp::Ordering;

fn lex(f: &[f64], m: usize, a: usize, b: usize) -> Ordering {
    let (x, y) = (&f[a * m..a * m + m], &f[b * m..b * m + m]);
    for k in 0..m {
        match x[k].total_cmp(&y[k]) {
            Ordering::Equal => continue,
            o => return o,
        }
    }
    a.cmp(&b)
}

fn same_point(f: &[f64], m: usize, a: usize, b: usize) -> bool {
    f[a * m..a * m + m]
        .iter()
        .zip(&f[b * m..b * m + m])
        .all(|(x, y)| x.total_cmp(y) == Ordering::Equal)
}

/// Does `a` dominate `b` (minimisation)?
pub fn dominates(f: &[f64], m: usize, a: usize, b: usize) -> bool {
    let (x, y) = (&f[a * m..a * m + m], &f[b * m..b * m + m]);
    let mut strict = false;
    for k in 0..m {
        if x[k] > y[k] {
            return false;
        }
        if x[k] < y[k] {
            strict = true;
        }
    }
    strict
}

/// Front index (0 = non-dominated) of each of the `f.len() / m` points.
///
/// # Arguments
/// `f`: row-major `n × m` objective values, all minimised, no NaN; `m ≥ 1`.
///
/// # Returns
/// `Vec<u32>` of length n. Deterministic: depends only on the values.
///
/// # Complexity
/// O(N log N) for m ≤ 2; ENS-BS above (see the module documentation).
///
/// # Panics
/// If `m == 0` or `f.len()` is not a multiple of `m` (caller bugs).
///
/// # Example
/// ```
/// use lumisift::rank::non_dominated_sort;
/// // (1,4) (2,2) (4,1) are mutually non-dominated; (3,3) is dominated by (2,2).
/// let f = [1.0, 4.0, 3.0, 3.0, 2.0, 2.0, 4.0, 1.0];
/// assert_eq!(non_dominated_sort(&f, 2), vec![0, 1, 0, 0]);
/// ```
pub fn non_dominated_sort(f: &[f64], m: usize) -> Vec<u32> {
    assert!(m > 0, "at least one objective");
    assert!(f.len().is_multiple_of(m), "matrix length is not n × m");
    let n = f.len() / m;
    let mut idx: Vec<u32> = (0..n as u32).collect();
    idx.sort_unstable_by(|&a, &b| lex(f, m, a as usize, b as usize));
    let mut front = vec![0u32; n];
    match m {
        1 => {
            let mut r = 0u32;
            for w in 0..n {
                if w > 0 && f[idx[w] as usize].total_cmp(&f[idx[w - 1] as usize]) != Ordering::Equal
                {
                    r += 1;
                }
                front[idx[w] as usize] = r;
            }
        }
        2 => sweep_2d(f, &idx, &mut front),
        _ => ens_bs(f, m, &idx, &mut front),
    }
    front
}

fn sweep_2d(f: &[f64], idx: &[u32], front: &mut [u32]) {
    // min_f2[k]: smallest f2 assigned to front k so far (non-decreasing in k).
    let mut min_f2: Vec<f64> = Vec::new();
    let n = idx.len();
    let mut w = 0;
    while w < n {
        let p = idx[w] as usize;
        let (f1, f2) = (f[2 * p], f[2 * p + 1]);
        // Group of identical points.
        let mut end = w + 1;
        while end < n {
            let q = idx[end] as usize;
            if f[2 * q].total_cmp(&f1) == Ordering::Equal
                && f[2 * q + 1].total_cmp(&f2) == Ordering::Equal
            {
                end += 1;
            } else {
                break;
            }
        }
        // First front whose minimum f2 is above f2 (not dominating).
        let k = min_f2.partition_point(|&x| x.total_cmp(&f2) != Ordering::Greater);
        if k == min_f2.len() {
            min_f2.push(f2);
        } else {
            min_f2[k] = f2;
        }
        for &q in &idx[w..end] {
            front[q as usize] = k as u32;
        }
        w = end;
    }
}

fn ens_bs(f: &[f64], m: usize, idx: &[u32], front: &mut [u32]) {
    let mut fronts: Vec<Vec<u32>> = Vec::new();
    for (w, &p) in idx.iter().enumerate() {
        let p = p as usize;
        // An identical predecessor fixes the front directly.
        if w > 0 && same_point(f, m, idx[w - 1] as usize, p) {
            let k = front[idx[w - 1] as usize];
            front[p] = k;
            fronts[k as usize].push(p as u32);
            continue;
        }
        let dominated_by = |k: usize| {
            fronts[k]
                .iter()
                .rev()
                .any(|&q| dominates(f, m, q as usize, p))
        };
        // Binary search for the first front with no member dominating p.
        let (mut lo, mut hi) = (0usize, fronts.len());
        while lo < hi {
            let mid = (lo + hi) / 2;
            if dominated_by(mid) {
                lo = mid + 1;
            } else {
                hi = mid;
            }
        }
        if lo == fronts.len() {
            fronts.push(Vec::new());
        }
        fronts[lo].push(p as u32);
        front[p] = lo as u32;
    }
}

/// Crowding distance of each point within its front.
///
/// # Arguments
/// `f` as for [`non_dominated_sort`]; `front` its result.
///
/// # Returns
/// One distance per point; +∞ for the boundary points of each objective.
///
/// # Complexity
/// O(M·N log N).
pub fn crowding_distance(f: &[f64], m: usize, front: &[u32]) -> Vec<f64> {
    assert!(m > 0 && f.len() == front.len() * m, "shapes disagree");
    let n = front.len();
    let mut d = vec![0.0f64; n];
    // Points grouped by front, each group in row order.
    let mut by_front: Vec<u32> = (0..n as u32).collect();
    by_front.sort_unstable_by_key(|&i| (front[i as usize], i));
    let mut start = 0;
    let mut members: Vec<u32> = Vec::new();
    while start < n {
        let fr = front[by_front[start] as usize];
        let mut end = start;
        while end < n && front[by_front[end] as usize] == fr {
            end += 1;
        }
        for k in 0..m {
            members.clear();
            members.extend_from_slice(&by_front[start..end]);
            let val = |i: u32| f[i as usize * m + k];
            members.sort_unstable_by(|&a, &b| val(a).total_cmp(&val(b)).then(a.cmp(&b)));
            let len = members.len();
            d[members[0] as usize] = f64::INFINITY;
            d[members[len - 1] as usize] = f64::INFINITY;
            let first = members.iter().map(|&i| val(i)).find(|x| x.is_finite());
            let last = members
                .iter()
                .rev()
                .map(|&i| val(i))
                .find(|x| x.is_finite());
            let range = match (first, last) {
                (Some(a), Some(b)) => b - a,
                _ => 0.0,
            };
            for w in 1..len.saturating_sub(1) {
                let gap = val(members[w + 1]) - val(members[w - 1]);
                let add = if !gap.is_finite() {
                    f64::INFINITY
                } else if range > 0.0 {
                    gap / range
                } else {
                    0.0
                };
                d[members[w] as usize] += add;
            }
        }
        start = end;
    }
    d
}
