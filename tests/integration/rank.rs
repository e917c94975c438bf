//! Tests of `rank`: filters with reasons and probabilities, Pareto sorting against a brute-force
//! reference on seeded random points (with ties and duplicates), crowding distance and
//! desirability against hand-computed values of the published formulas (Deb et al. 2002;
//! Derringer & Suich 1980), and MaxMin picking.

use lumisift::chem::{
    Fingerprint, FingerprintParams, circular_fingerprint, parse_smiles, tanimoto,
};
use lumisift::rank::desirability::weighted_geometric_mean;
use lumisift::rank::pareto::dominates;
use lumisift::rank::{
    DELTA_EST_CAP_EV, DesirabilityFn, DesirabilityTerm, Direction, DiversityParams, Filters,
    Objective, PickInput, Quantity, RankParams, Reason, Scored, StopReason, Uncertain,
    crowding_distance, non_dominated_sort, normal_cdf, normal_quantile, overall_desirability,
    pick_diverse, rank,
};

#[path = "../support/splitmix.rs"]
mod splitmix;
use splitmix::Rng;

/// MaxMin candidates: each fingerprint with its fragment ids.
fn pool<'a>(fps: &'a [Fingerprint], ids: &'a [Vec<String>]) -> Vec<PickInput<'a>> {
    fps.iter()
        .zip(ids)
        .map(|(f, ids)| PickInput {
            fingerprint: f,
            fragment_ids: ids,
        })
        .collect()
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol
}

fn row(id: &str, dest: f64, f: f64, s1: f64) -> Scored {
    Scored {
        candidate_id: id.to_string(),
        s1_ev: Some(Uncertain::exact(s1)),
        delta_est_ev: Some(Uncertain::exact(dest)),
        osc_strength: Some(Uncertain::exact(f)),
        mol_weight: Some(500.0),
        ..Scored::default()
    }
}

// ---------------------------------------------------------------- normal distribution

#[test]
fn normal_cdf_and_quantile_match_tables() {
    // Standard normal table values.
    for (x, p) in [
        (0.0, 0.5),
        (1.0, 0.841_344_746),
        (-1.0, 0.158_655_254),
        (1.959_963_985, 0.975),
        (-2.326_347_874, 0.01),
        (3.0, 0.998_650_102),
    ] {
        assert!(close(normal_cdf(x), p, 2e-7), "Φ({x}) = {}", normal_cdf(x));
    }
    assert!(close(normal_quantile(0.95), 1.644_853_627, 1e-6));
    assert!(close(normal_quantile(0.9), 1.281_551_566, 1e-6));
}

#[test]
fn interval_becomes_two_piece_normal() {
    // 90 % interval [0.05, 0.30] around 0.10: P(X ≤ hi) = 0.95, P(X ≤ lo) = 0.05.
    let u = Uncertain::from_interval(0.10, 0.05, 0.30, 0.9).unwrap();
    assert!(close(u.prob_at_most(0.30), 0.95, 1e-6));
    assert!(close(u.prob_at_most(0.05), 0.05, 1e-6));
    assert!(close(u.prob_at_most(0.10), 0.5, 1e-7));
    assert!(u.sigma_hi > u.sigma_lo);
    assert!(Uncertain::from_interval(0.1, 0.2, 0.3, 0.9).is_err());
    assert!(Uncertain::from_interval(0.1, 0.0, 0.3, 1.0).is_err());
    // Exact values: the boundary passes both ways.
    let e = Uncertain::exact(0.2);
    assert_eq!(e.prob_at_most(0.2), 1.0);
    assert_eq!(e.prob_at_least(0.2), 1.0);
    assert_eq!(e.prob_at_most(0.19), 0.0);
}

// ---------------------------------------------------------------- filters

fn strict_filters() -> Filters {
    Filters {
        delta_est_max_ev: Some(0.2),
        f_min: Some(0.01),
        s1_min_ev: Some(2.6),
        s1_max_ev: Some(3.0),
        colour_target: Some("bt2020-blue".into()),
        colour_max_delta_uv: Some(0.05),
        mw_max: Some(900.0),
        le3_minus_ct1_min_ev: Some(-0.1),
        exclude_not_converged: true,
    }
}

#[test]
fn every_failed_filter_is_listed() {
    let good = Scored {
        cie_xy: Some((0.14, 0.06)),
        s1_minus_3le_ev: Some(Uncertain::exact(0.05)),
        ..row("good", 0.1, 0.05, 2.8)
    };
    let bad = Scored {
        candidate_id: "bad".into(),
        delta_est_ev: Some(Uncertain::exact(0.5)),
        osc_strength: Some(Uncertain::exact(0.001)),
        s1_ev: Some(Uncertain::exact(3.3)),
        cie_xy: Some((0.30, 0.60)),
        mol_weight: Some(1200.0),
        s1_minus_3le_ev: Some(Uncertain::exact(0.3)),
        not_converged: true,
        ..Scored::default()
    };
    let missing = Scored {
        candidate_id: "missing".into(),
        ..Scored::default()
    };
    let params = RankParams {
        filters: strict_filters(),
        ..RankParams::default()
    };
    let r = rank(&[good, bad, missing], &params).unwrap();
    assert!(r.rows[0].kept, "{:?}", r.rows[0].rejections);
    assert_eq!(r.rows[0].pass_probability, 1.0);
    let reasons = |i: usize| -> Vec<&str> {
        r.rows[i]
            .rejections
            .iter()
            .map(|x| x.reason.as_str())
            .collect()
    };
    assert_eq!(
        reasons(1),
        vec![
            "not_converged",
            "delta_est_above_max",
            "osc_strength_below_min",
            "s1_above_max",
            "colour_outside_tolerance",
            "mol_weight_above_max",
            "le3_minus_ct1_below_min",
        ]
    );
    assert_eq!(
        reasons(2),
        vec![
            "missing_delta_est",
            "missing_osc_strength",
            "missing_s1",
            "missing_colour",
            "missing_mol_weight",
            "missing_s1_minus_3le",
        ]
    );
    assert_eq!(r.order, vec![0]);
    // Stable serialised names.
    assert_eq!(
        serde_json::to_string(&Reason::DeltaEstAboveMax).unwrap(),
        "\"delta_est_above_max\""
    );
}

#[test]
fn filters_from_toml_reject_unknown_keys() {
    let f: Filters = toml::from_str("delta_est_max_ev = 0.2\nf_min = 0.01").unwrap();
    assert_eq!(f.delta_est_max_ev, Some(0.2));
    assert!(f.exclude_not_converged, "default true");
    assert!(toml::from_str::<Filters>("delta_est_max = 0.2").is_err());
    let bad = Filters {
        s1_min_ev: Some(3.0),
        s1_max_ev: Some(2.0),
        ..Filters::default()
    };
    assert!(bad.resolve().is_err());
    let p: RankParams = toml::from_str(
        r#"
        p_min = 0.6
        [filters]
        delta_est_max_ev = 0.3
        [[objectives]]
        quantity = "delta_est_ev"
        direction = "minimise"
        [[desirability]]
        quantity = "delta_est_ev"
        weight = 2.0
        function = { kind = "smaller_is_better", target = 0.04, high = 0.3, s = 1.0 }
        "#,
    )
    .unwrap();
    assert_eq!(p.objectives.len(), 1);
    assert_eq!(p.desirability[0].weight, 2.0);
    p.validate().unwrap();
}

#[test]
fn probability_of_passing_is_a_product_of_normal_tails() {
    // ΔEST 0.10 ± 0.05 against 0.15 and f 0.02 ± 0.01 against 0.01: Φ(1)² = 0.70786.
    let r = Scored {
        delta_est_ev: Some(Uncertain::with_sigma(0.10, 0.05)),
        osc_strength: Some(Uncertain::with_sigma(0.02, 0.01)),
        ..row("u", 0.0, 0.0, 2.8)
    };
    let filters = Filters {
        delta_est_max_ev: Some(0.15),
        f_min: Some(0.01),
        ..Filters::default()
    };
    let phi1 = 0.841_344_746;
    let run = |p_min: f64| {
        rank(
            std::slice::from_ref(&r),
            &RankParams {
                filters: filters.clone(),
                p_min,
                ..RankParams::default()
            },
        )
        .unwrap()
    };
    let k = run(0.7);
    assert!(k.rows[0].kept);
    assert!(close(k.rows[0].pass_probability, phi1 * phi1, 1e-6));
    // Each filter passes alone at 0.75 but not jointly.
    let j = run(0.75);
    assert!(!j.rows[0].kept);
    assert_eq!(j.rows[0].rejections.len(), 1);
    assert_eq!(
        j.rows[0].rejections[0].reason,
        Reason::JointProbabilityBelowThreshold
    );
    // At 0.9 both filters fail alone and both are listed.
    let b = run(0.9);
    let rs: Vec<Reason> = b.rows[0].rejections.iter().map(|x| x.reason).collect();
    assert_eq!(
        rs,
        vec![Reason::DeltaEstAboveMax, Reason::OscStrengthBelowMin]
    );
    assert!(close(b.rows[0].rejections[0].probability, phi1, 1e-6));
}

// ---------------------------------------------------------------- Pareto

fn brute_fronts(f: &[f64], m: usize) -> Vec<u32> {
    let n = f.len() / m;
    let mut front = vec![u32::MAX; n];
    let mut left: Vec<usize> = (0..n).collect();
    let mut k = 0;
    while !left.is_empty() {
        let nd: Vec<usize> = left
            .iter()
            .copied()
            .filter(|&i| !left.iter().any(|&j| dominates(f, m, j, i)))
            .collect();
        for &i in &nd {
            front[i] = k;
        }
        left.retain(|i| !nd.contains(i));
        k += 1;
    }
    front
}

#[test]
fn pareto_fronts_equal_brute_force_with_ties_and_duplicates() {
    let mut rng = Rng(7);
    for m in 1..=4 {
        for n in [0usize, 1, 2, 5, 30, 200, 600] {
            for grid in [0.0, 5.0] {
                let f: Vec<f64> = (0..n * m)
                    .map(|_| {
                        let x = rng.unit();
                        // A coarse grid makes many ties and duplicate points.
                        if grid > 0.0 { (x * grid).floor() } else { x }
                    })
                    .collect();
                let got = non_dominated_sort(&f, m);
                assert_eq!(got, brute_fronts(&f, m), "m {m}, n {n}, grid {grid}");
            }
        }
    }
}

#[test]
fn pareto_handles_infinite_values_and_is_order_independent() {
    let f = [1.0, f64::INFINITY, 0.5, 2.0, f64::INFINITY, 0.0, 0.5, 2.0];
    let fr = non_dominated_sort(&f, 2);
    assert_eq!(fr, brute_fronts(&f, 2));
    // Permuting rows permutes the fronts.
    let mut rng = Rng(3);
    let n = 300;
    let f: Vec<f64> = (0..2 * n).map(|_| (rng.unit() * 8.0).floor()).collect();
    let fr = non_dominated_sort(&f, 2);
    let perm: Vec<usize> = (0..n).rev().collect();
    let g: Vec<f64> = perm
        .iter()
        .flat_map(|&i| [f[2 * i], f[2 * i + 1]])
        .collect();
    let gr = non_dominated_sort(&g, 2);
    for (k, &i) in perm.iter().enumerate() {
        assert_eq!(gr[k], fr[i]);
    }
}

#[test]
fn crowding_distance_matches_hand_values() {
    // One front of four points on a line x + y = 3 (Deb et al. 2002, Fig. 1 construction):
    // interior points get (2 − 0)/3 + (3 − 1)/3 = 4/3.
    let f = [0.0, 3.0, 1.0, 2.0, 2.0, 1.0, 3.0, 0.0];
    let fr = non_dominated_sort(&f, 2);
    assert_eq!(fr, vec![0, 0, 0, 0]);
    let d = crowding_distance(&f, 2, &fr);
    assert!(d[0].is_infinite() && d[3].is_infinite());
    assert!(close(d[1], 4.0 / 3.0, 1e-12) && close(d[2], 4.0 / 3.0, 1e-12));
    // Uneven spacing: points (0,10) (1,6) (4,5) (10,0): interior 1 gets 4/10 + 5/10,
    // interior 2 gets 9/10 + 6/10.
    let f = [0.0, 10.0, 1.0, 6.0, 4.0, 5.0, 10.0, 0.0];
    let d = crowding_distance(&f, 2, &non_dominated_sort(&f, 2));
    assert!(close(d[1], 0.9, 1e-12) && close(d[2], 1.5, 1e-12), "{d:?}");
}

// ---------------------------------------------------------------- desirability

#[test]
fn desirability_functions_match_hand_computed_values() {
    let ltb = DesirabilityFn::LargerIsBetter {
        low: 0.0,
        target: 10.0,
        s: 2.0,
    };
    assert_eq!(ltb.eval(-1.0), 0.0);
    assert!(close(ltb.eval(5.0), 0.25, 1e-15)); // (5/10)²
    assert_eq!(ltb.eval(12.0), 1.0);
    let stb = DesirabilityFn::SmallerIsBetter {
        target: 0.04,
        high: 0.30,
        s: 1.0,
    };
    assert!(close(stb.eval(0.17), 0.5, 1e-12)); // (0.30 − 0.17)/(0.30 − 0.04)
    assert_eq!(stb.eval(0.01), 1.0);
    assert_eq!(stb.eval(0.31), 0.0);
    let sqrt = DesirabilityFn::SmallerIsBetter {
        target: 0.0,
        high: 1.0,
        s: 0.5,
    };
    assert!(close(sqrt.eval(0.75), 0.5, 1e-15)); // 0.25^0.5
    let tib = DesirabilityFn::TargetIsBest {
        low: 2.5,
        target: 2.8,
        high: 3.2,
        s: 1.0,
        t: 2.0,
    };
    assert!(close(tib.eval(2.65), 0.5, 1e-12)); // (0.15/0.30)¹
    assert!(close(tib.eval(3.0), 0.25, 1e-12)); // (0.2/0.4)²
    assert_eq!(tib.eval(2.8), 1.0);
    assert_eq!(tib.eval(2.4), 0.0);
    // D = (0.25¹ · 0.5³)^(1/4) = 0.03125^(1/4).
    assert!(close(
        weighted_geometric_mean(&[(0.25, 1.0), (0.5, 3.0)]),
        0.03125f64.powf(0.25),
        1e-12
    ));
    assert_eq!(weighted_geometric_mean(&[(0.0, 1.0), (0.9, 1.0)]), 0.0);
    assert_eq!(weighted_geometric_mean(&[(0.0, 0.0), (0.81, 1.0)]), 0.81);
    assert!(
        DesirabilityFn::LargerIsBetter {
            low: 1.0,
            target: 1.0,
            s: 1.0
        }
        .validate()
        .is_err()
    );
}

#[test]
fn delta_est_reward_is_capped() {
    let terms = DesirabilityTerm::defaults();
    let d = |dest: f64| overall_desirability(&row("x", dest, 0.05, 2.8), &terms, None, 0.0);
    assert_eq!(DELTA_EST_CAP_EV, 0.04);
    // Below the cap a smaller gap is not better.
    assert_eq!(d(0.0), d(DELTA_EST_CAP_EV));
    assert_eq!(d(0.001), d(0.03));
    assert!(d(0.08) < d(0.04));
    // Default f term: log10 f from −3 to −1; f = 0.01 gives 0.5; with ΔEST at the cap
    // (d = 1) D = √0.5.
    let one = overall_desirability(&row("y", 0.02, 0.01, 2.8), &terms, None, 0.0);
    assert!(close(one, 0.5f64.sqrt(), 1e-12), "{one}");
    // A perfectly dark molecule (f → 0) gets nothing however small its gap.
    assert!(d(0.0) > 0.0);
    assert_eq!(
        overall_desirability(&row("z", 0.0, 1e-6, 2.8), &terms, None, 0.0),
        0.0
    );
}

// ---------------------------------------------------------------- ranking

#[test]
fn wide_intervals_rank_below_narrow_ones_with_the_same_values() {
    let narrow = Scored {
        delta_est_ev: Some(Uncertain::with_sigma(0.10, 0.01)),
        ..row("narrow", 0.1, 0.02, 2.8)
    };
    let wide = Scored {
        delta_est_ev: Some(Uncertain::with_sigma(0.10, 0.08)),
        ..row("wide", 0.1, 0.02, 2.8)
    };
    let r = rank(&[wide, narrow], &RankParams::default()).unwrap();
    assert_eq!(r.order, vec![1, 0]);
    assert!(r.rows[1].desirability.unwrap() > r.rows[0].desirability.unwrap());
    assert_eq!(r.rows[1].front, Some(0));
    assert_eq!(r.rows[0].front, Some(1));
    assert!(close(r.z, 1.281_551_566, 1e-6));
}

#[test]
fn ranking_orders_by_front_then_desirability_and_is_deterministic() {
    let mut rng = Rng(11);
    let rows: Vec<Scored> = (0..2000)
        .map(|i| {
            row(
                &format!("c{i}"),
                (rng.unit() * 0.4 * 100.0).round() / 100.0,
                10f64.powf(-3.5 + 3.0 * rng.unit()),
                2.4 + rng.unit(),
            )
        })
        .collect();
    let params = RankParams {
        filters: Filters {
            delta_est_max_ev: Some(0.3),
            ..Filters::default()
        },
        ..RankParams::default()
    };
    let a = rank(&rows, &params).unwrap();
    let b = rank(&rows, &params).unwrap();
    assert_eq!(a, b);
    let mut last = (0u32, f64::INFINITY);
    for &i in &a.order {
        let r = &a.rows[i];
        let key = (r.front.unwrap(), r.desirability.unwrap());
        assert!(
            key.0 > last.0 || (key.0 == last.0 && key.1 <= last.1),
            "order broken"
        );
        last = key;
    }
    // Every kept row is in the order once; rejected rows are not.
    let kept = a.rows.iter().filter(|r| r.kept).count();
    assert_eq!(a.order.len(), kept);
    assert!(
        a.rows
            .iter()
            .filter(|r| !r.kept)
            .all(|r| r.position.is_none() && r.rejections[0].reason == Reason::DeltaEstAboveMax)
    );
    // The objective view: front 0 rows are not dominated by any kept row.
    let obj = [
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
    ];
    assert_eq!(params.objectives, obj.to_vec());
}

// ---------------------------------------------------------------- diversity

/// Clustered fingerprints: `clusters` random parents, each with `per` children that flip a
/// few bits (children of one parent are very similar).
fn clustered(rng: &mut Rng, clusters: usize, per: usize) -> Vec<Fingerprint> {
    let mut out = Vec::new();
    for _ in 0..clusters {
        let parent: Vec<u64> = (0..16).map(|_| rng.next() & rng.next()).collect();
        for _ in 0..per {
            let mut w = parent.clone();
            for _ in 0..3 {
                let b = (rng.next() % 1024) as usize;
                w[b / 64] ^= 1 << (b % 64);
            }
            out.push(Fingerprint { words: w });
        }
    }
    out
}

#[test]
fn maxmin_picks_respect_the_similarity_ceiling() {
    let mut rng = Rng(5);
    let fps = clustered(&mut rng, 12, 20);
    // Interleave so that rank order is not cluster order.
    let frags: Vec<Vec<String>> = (0..fps.len())
        .map(|i| vec![format!("acc-{}", i % 7), format!("don-{}", i % 5)])
        .collect();
    let pool = pool(&fps, &frags);
    let params = DiversityParams {
        n_pick: 10,
        max_similarity: 0.5,
        max_per_fragment: None,
        pool_size: 0,
    };
    let picks = pick_diverse(&pool, &params).unwrap();
    assert_eq!(picks.picks.len(), 10);
    assert_eq!(picks.stop, StopReason::Complete);
    assert_eq!(picks.picks[0].pool_index, 0, "seeded by the best-ranked");
    assert_eq!(picks.picks[0].max_similarity, None);
    for (a, pa) in picks.picks.iter().enumerate() {
        for pb in &picks.picks[a + 1..] {
            let s = tanimoto(&fps[pa.pool_index], &fps[pb.pool_index]);
            assert!(s <= 0.5, "{s}");
        }
    }
    // Twelve clusters: asking for 20 stops early when the clusters are used up.
    let all = pick_diverse(
        &pool,
        &DiversityParams {
            n_pick: 20,
            ..params
        },
    )
    .unwrap();
    assert_eq!(all.stop, StopReason::NoEligible);
    assert_eq!(all.picks.len(), 12);
    assert!(all.excluded_by_similarity > 0);
    // Deterministic.
    assert_eq!(
        all,
        pick_diverse(
            &pool,
            &DiversityParams {
                n_pick: 20,
                ..params
            }
        )
        .unwrap()
    );
}

#[test]
fn fragment_cap_limits_picks_sharing_a_fragment() {
    let mut rng = Rng(9);
    let fps = clustered(&mut rng, 40, 1);
    let frags: Vec<Vec<String>> = (0..fps.len())
        .map(|i| {
            // D–A–D: the donor listed twice counts once.
            let d = format!("don-{}", i % 3);
            vec![format!("acc-{}", i % 10), d.clone(), d]
        })
        .collect();
    let pool = pool(&fps, &frags);
    let p = pick_diverse(
        &pool,
        &DiversityParams {
            n_pick: 30,
            max_similarity: 1.0,
            max_per_fragment: Some(2),
            pool_size: 0,
        },
    )
    .unwrap();
    // Three donors, at most two picks each.
    assert_eq!(p.picks.len(), 6);
    let mut count = std::collections::BTreeMap::new();
    for pk in &p.picks {
        for id in &frags[pk.pool_index][..2] {
            *count.entry(id.clone()).or_insert(0) += 1;
        }
    }
    assert!(count.values().all(|&c| c <= 2), "{count:?}");
    assert!(
        DiversityParams {
            max_per_fragment: Some(0),
            ..DiversityParams::default()
        }
        .validate()
        .is_err()
    );
}

#[test]
fn maxmin_on_real_molecules() {
    // A ranked pool of donor–acceptor molecules: three carbazole–benzonitrile variants, an
    // acridan–triazine, a phenoxazine–sulfone.
    let smiles = [
        "N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21",
        "N#Cc1ccc(cc1C#N)-n1c2ccccc2c2ccccc21",
        "N#Cc1ccc(cc1)-n1c2ccc(C)cc2c2cc(C)ccc21",
        "CC1(C)c2ccccc2N(c2ccc(cc2)-c2nc(-c3ccccc3)nc(-c3ccccc3)n2)c2ccccc21",
        "O=S(=O)(c1ccccc1)c1ccc(cc1)N1c2ccccc2Oc2ccccc21",
    ];
    let fps: Vec<Fingerprint> = smiles
        .iter()
        .map(|s| circular_fingerprint(&parse_smiles(s).unwrap(), FingerprintParams::default()))
        .collect();
    let ids: Vec<Vec<String>> = (0..5).map(|i| vec![format!("f{i}")]).collect();
    let pool = pool(&fps, &ids);
    let thr = 0.35;
    let p = pick_diverse(
        &pool,
        &DiversityParams {
            n_pick: 5,
            max_similarity: thr,
            max_per_fragment: None,
            pool_size: 0,
        },
    )
    .unwrap();
    assert_eq!(p.picks[0].pool_index, 0);
    for (a, x) in p.picks.iter().enumerate() {
        for y in &p.picks[a + 1..] {
            assert!(tanimoto(&fps[x.pool_index], &fps[y.pool_index]) <= thr);
        }
    }
    // The two unrelated chemotypes are picked before the carbazole variants.
    let second: Vec<usize> = p.picks[1..3].iter().map(|x| x.pool_index).collect();
    assert!(second.contains(&3) && second.contains(&4), "{p:?}");
}
