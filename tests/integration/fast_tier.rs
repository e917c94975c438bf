//! The fast fragment tier: its fit against the π tier on held-out tuples, the donor–acceptor
//! pair table against the π tier, its twist model against published torsions, tuple keys, and
//! the screen stage in the runner.

use std::ops::ControlFlow;

use lumisift::combine::{EnumerateParams, Enumerator, Tuple, TupleEvent};
use lumisift::fast::fit::{evaluate, fit_model, screen_fit};
use lumisift::fast::pairs::{PairCache, dimer_jobs};
use lumisift::fast::{CardSet, Describer, FastModel, N_FEATURES, Screener, TupleClass};
use lumisift::model::Architecture;
use lumisift::pi::params::PppParams;

#[path = "../support/fasttier.rs"]
mod fasttier;

/// The shipped model, re-evaluated on the test rows of the fixture (π-tier results on a seeded
/// sample of the library; rows split by candidate id, see tests/support/fasttier.rs), must
/// reproduce the figures recorded in `data/fast-tier.toml` (so the record cannot drift from the
/// model or the data), be refitted exactly from the fitting rows, and clear its bars.
#[test]
fn the_shipped_fast_model_matches_its_held_out_record() {
    let lib = fasttier::library();
    let set = fasttier::cards();
    let (fit, test) = fasttier::samples(lib, set);
    let shipped = FastModel::default_model();
    // Plain dimers (D–A) take the pair table's values and are not fitted.
    let fitted = fit
        .iter()
        .filter(|s| s.summary.class != TupleClass::Dimer)
        .count();
    assert!(fitted < fit.len(), "the fixture holds D–A rows");
    assert_eq!(shipped.fit.n_fit, fitted, "fitting rows changed: refit");
    assert!(
        test.len() >= 2000,
        "the acceptance check needs ≥ 2,000 held-out candidates, has {}",
        test.len()
    );
    // Refit: the same floor and coefficients (ridge has one solution).
    let ids: Vec<String> = lib.fragments.iter().map(|f| f.id.clone()).collect();
    let sf = screen_fit(
        &fit,
        &shipped.screen.settings(),
        shipped.screen.refractive_index,
        shipped.screen.temperature_k,
    );
    assert!(
        (sf.floor - shipped.screen.floor).abs() < 1e-9,
        "screen floor {} vs {}: refit",
        sf.floor,
        shipped.screen.floor
    );
    let refit = fit_model(&fit, &ids, shipped.fit.ridge_alpha, sf).expect("fit");
    // The gate: the same quantile of the fitting rows' ridge part (chosen by
    // cross-validation in the fit example).
    assert_eq!(refit.screen.gate_quantile, shipped.screen.gate_quantile);
    match (refit.screen.gate, shipped.screen.gate) {
        (Some(a), Some(b)) => assert!((a - b).abs() < 1e-9, "gate {a} vs {b}: refit"),
        (a, b) => assert_eq!(a, b, "gate: refit"),
    }
    let close = |a: &[f64], b: &[f64]| {
        assert_eq!(a.len(), b.len());
        for (x, y) in a.iter().zip(b.iter()) {
            assert!((x - y).abs() < 1e-6 * (1.0 + y.abs()), "{x} vs {y}: refit");
        }
    };
    for (r, s) in [
        (&refit.bridged, &shipped.bridged),
        (&refit.multi_arm, &shipped.multi_arm),
    ] {
        close(&r.s1_ev, &s.s1_ev);
        close(&r.log10_delta_est, &s.log10_delta_est);
        close(&r.log10_f, &s.log10_f);
        close(&r.screen, &s.screen);
        close(&r.screen_products, &s.screen_products);
    }
    assert_eq!(refit.donor_terms.len(), shipped.donor_terms.len());
    assert_eq!(
        refit.bridge_slopes.keys().collect::<Vec<_>>(),
        shipped.bridge_slopes.keys().collect::<Vec<_>>()
    );
    for (k, v) in &refit.bridge_slopes {
        close(v.as_flattened(), shipped.bridge_slopes[k].as_flattened());
    }
    assert_eq!(refit.screen_trees.len(), shipped.screen_trees.len());
    for (r, s) in refit.screen_trees.iter().zip(&shipped.screen_trees) {
        assert_eq!(r.features, s.features, "tree descriptors: refit");
        close(&r.thresholds, &s.thresholds);
        close(&r.leaves, &s.leaves);
    }
    let bound = shipped.bind(set, fasttier::N_HOST, fasttier::T_K);
    let ev = evaluate(&test, &bound);
    let r = &shipped.fit.held_out;
    assert_eq!(r.n, ev.n);
    for (name, rec, now) in [
        ("spearman_s1", r.spearman_s1, ev.spearman_s1),
        ("spearman_t1", r.spearman_t1, ev.spearman_t1),
        (
            "spearman_delta_est",
            r.spearman_delta_est,
            ev.spearman_delta_est,
        ),
        ("spearman_f", r.spearman_f, ev.spearman_f),
        ("spearman_merit", r.spearman_merit, ev.spearman_merit),
        ("spearman_score", r.spearman_score, ev.spearman_score),
        ("mae_s1_ev", r.mae_s1_ev, ev.mae_s1_ev),
        ("mae_t1_ev", r.mae_t1_ev, ev.mae_t1_ev),
        ("mae_delta_est_ev", r.mae_delta_est_ev, ev.mae_delta_est_ev),
        (
            "top100_kept_at_10pct",
            r.top100_kept_at_10pct,
            ev.top100_kept_at_10pct,
        ),
        (
            "pass_fraction_for_95pct",
            r.pass_fraction_for_95pct,
            ev.pass_fraction_for_95pct,
        ),
    ] {
        assert!(
            (rec - now).abs() < 1e-6,
            "{name}: recorded {rec}, now {now}"
        );
    }
    // The issue's bar: passing 10 % of the held-out library by the screen score keeps ≥ 95 %
    // of the π tier's top 100 (by log10 k_TADF). Bars of our own, just below what the model
    // reaches, so losing the pair descriptors fails here: ρ ≥ 0.9 for S1 and T1, ≥ 0.85 for
    // ΔEST and the merit.
    assert!(ev.top100_kept_at_10pct >= 0.95, "{ev:?}");
    assert!(ev.pass_fraction_for_95pct <= 0.10, "{ev:?}");
    assert!(ev.spearman_s1 >= 0.9 && ev.spearman_t1 >= 0.9, "{ev:?}");
    assert!(
        ev.spearman_delta_est >= 0.85 && ev.spearman_merit >= 0.85,
        "{ev:?}"
    );
    // Without its boosted trees (`[screen] trees = false`) the score is coarser but still far
    // ahead of ordering by the composed merit (68 % on this library): DEVELOPERS.md records 90 %.
    let mut ridge_only = bound.clone();
    ridge_only.drop_trees();
    let coarse = evaluate(&test, &ridge_only);
    assert!(
        coarse.top100_kept_at_10pct >= 0.88
            && coarse.top100_kept_at_10pct < ev.top100_kept_at_10pct,
        "{coarse:?}"
    );
}

/// Fragments used in the pair-table checks: small ones, one of each kind of site orbit (a
/// one-site and a symmetric two-site acceptor, a symmetric and an asymmetric bridge).
const PAIR_SUBSET: [&str; 5] = [
    "carbazol-9-yl",
    "4-cyanophenyl",
    "isophthalonitrile-4-6-diyl",
    "1-4-phenylene",
    "2-methyl-1-4-phenylene",
];

/// The pair table of a workflow's fragments, computed here with the π tier (no cache), equals
/// the shipped cache's entries for the same dimers (so the cache is the current π tier's
/// results, not stale numbers), covers only what was asked for, and the shipped cache holds
/// every dimer of the shipped library under the fragments' current structures.
#[test]
fn the_pair_table_is_the_pi_tier_and_the_cache_is_current() {
    let lib = fasttier::library();
    let full = fasttier::cards();
    let want: Vec<usize> = PAIR_SUBSET
        .iter()
        .map(|id| lib.index_of(id).unwrap_or_else(|| panic!("{id}")))
        .collect();
    let ppp = PppParams::default_set();
    let fresh = CardSet::for_library_with(lib, &ppp, fasttier::T_K, &|i| want.contains(&i), None)
        .expect("cards");
    let t = &fresh.pair_table;
    // carbazole × (cyanophenyl, isophthalonitrile's one orbit) + carbazole × (phenylene, two
    // orbits of methylphenylene) + (the same three bridge orbits) × cyanophenyl.
    assert_eq!((t.computed, t.cached, t.failed), (8, 0, 0));
    let mut compared = 0;
    for i in 0..t.n_sites {
        for j in 0..t.n_sites {
            let (a, b) = (t.get(i, j), full.pair_table.get(i, j));
            if !a.is_known() {
                continue;
            }
            compared += 1;
            for (x, y) in [
                (a.v.s1_ev, b.v.s1_ev),
                (a.v.t1_ev, b.v.t1_ev),
                (a.v.delta_est_ev, b.v.delta_est_ev),
                (a.v.f_s1, b.v.f_s1),
            ] {
                // The cache keeps six decimals.
                assert!((x - y).abs() < 1e-6, "site pair {i},{j}: {x} vs cached {y}");
            }
        }
    }
    // Symmetric site orbits are copied: isophthalonitrile's two sites, phenylene's two.
    assert_eq!(compared, 11);
    // Outside the subset nothing was computed.
    let off = |id: &str, s: usize| full.site_offset[lib.index_of(id).unwrap()] + s;
    assert!(
        !t.get(off("phenoxazin-10-yl", 0), off("4-cyanophenyl", 0))
            .is_known()
    );
    assert!(
        full.pair_table
            .get(off("phenoxazin-10-yl", 0), off("4-cyanophenyl", 0))
            .is_known()
    );
    // The cache answers every dimer of the shipped library (a fragment edited without
    // rewriting the cache would show up here).
    let cache = PairCache::shipped();
    let jobs = dimer_jobs(lib, &|_| true);
    let missing: Vec<_> = jobs
        .iter()
        .filter(|&&j| cache.get(lib, j).is_none())
        .map(|&(d, sd, a, sa)| format!("{}:{sd}–{}:{sa}", lib.fragments[d].id, lib.fragments[a].id))
        .collect();
    assert!(
        missing.is_empty(),
        "not in data/fast-pairs.csv: {missing:?}"
    );
    assert_eq!(cache.len(), jobs.len());
}

/// A D–A tuple is its own dimer: the fast tier's S1, ΔEST and f are the π tier's
/// torsion-averaged values of the assembled molecule.
#[test]
fn a_donor_acceptor_tuple_gets_its_pi_tier_values() {
    let lib = fasttier::library();
    let set = fasttier::cards();
    let bound = FastModel::default_model().bind(set, fasttier::N_HOST, fasttier::T_K);
    let t = Tuple::parse_key(lib, "D-A|4-cyanophenyl|1:carbazol-9-yl").unwrap();
    let fe = bound.predict(set, &t).unwrap();
    let e = lumisift::pi::estimate::estimate(
        &lumisift::combine::assemble(lib, &t).mol,
        &PppParams::default_set(),
        &lumisift::pi::estimate::EstimateParams::default(),
    )
    .unwrap();
    assert!(
        (fe.s1_ev - e.avg_s1_ev).abs() < 1e-6,
        "{fe:?} vs {}",
        e.avg_s1_ev
    );
    assert!((fe.delta_est_ev - e.avg_delta_est_ev.max(0.0)).abs() < 1e-6);
    assert!((fe.f_s1 - e.avg_f_s1).abs() < 1e-6);
    assert!(!fe.unseen_fragment);
    // A D–A–D on the same acceptor type is not a dimer: it goes through the fitted model.
    let mut x = [0.0; lumisift::fast::N_FEATURES];
    let dad = Tuple::parse_key(
        lib,
        "D-A-D|isophthalonitrile-4-6-diyl|1:carbazol-9-yl 2:carbazol-9-yl",
    )
    .unwrap();
    let s = lumisift::fast::describe(set, &dad, &mut x).unwrap();
    assert_eq!(s.class, TupleClass::MultiArm);
}

/// The additive pair model reproduces biphenyl for phenyl–phenyl (the probe against itself):
/// gas-phase twist 44.4° (science.md b; the π tier's torsion model gives 39.8°, within 6°),
/// and an ortho-dimethylated ring twists further (a qualitative bar of this project: ortho
/// substituents are the usual way to force a twist; the 15° margin is ours).
#[test]
fn pair_twists_follow_the_torsion_model() {
    let lib = fasttier::library();
    let set = fasttier::cards();
    let idx = |id: &str| lib.index_of(id).unwrap_or_else(|| panic!("{id}"));
    // phenyl-like acceptor site (4-cyanophenyl) against the 1,4-phenylene bridge.
    let plain = set.pair(idx("4-cyanophenyl"), 0, idx("1-4-phenylene"), 0);
    assert!(
        (plain.theta_deg - 44.4).abs() < 8.0,
        "4-cyanophenyl–phenylene twist {}",
        plain.theta_deg
    );
    let hindered = set.pair(
        idx("4-cyanophenyl"),
        0,
        idx("2-5-dimethyl-1-4-phenylene"),
        0,
    );
    assert!(hindered.theta_deg > plain.theta_deg + 15.0, "{hindered:?}");
    assert!(hindered.cos2 < plain.cos2);
    // The table is symmetric.
    let back = set.pair(
        idx("2-5-dimethyl-1-4-phenylene"),
        0,
        idx("4-cyanophenyl"),
        0,
    );
    assert_eq!(hindered, back);
}

/// Every tuple key of a small enumeration reads back to the same tuple.
#[test]
fn tuple_keys_read_back() {
    let lib = fasttier::library();
    let params = EnumerateParams {
        architectures: vec![Architecture::DBA, Architecture::DnA, Architecture::ADA],
        dn_a_max: 3,
        max_mol_weight: 700.0,
        ..EnumerateParams::default()
    };
    let en = Enumerator::new(lib, &params).unwrap();
    let mut n = 0;
    en.for_each(|e| {
        if let TupleEvent::Admitted(t) = e {
            let back = Tuple::parse_key(lib, &t.key(lib)).unwrap();
            assert_eq!(back, t);
            n += 1;
            if n >= 3000 {
                return ControlFlow::Break(());
            }
        }
        ControlFlow::Continue(())
    });
    assert!(n > 500);
    for bad in [
        "D-A",
        "X-Y|4-cyanophenyl|1:carbazol-9-yl",
        "D-A|no-such-fragment|1:carbazol-9-yl",
        "D-A|4-cyanophenyl|2:carbazol-9-yl",
        "D-A|4-cyanophenyl|1:carbazol-9-yl 2:H",
        "D-B-A|4-cyanophenyl|1:1-4-phenylene[3]>carbazol-9-yl",
    ] {
        assert!(Tuple::parse_key(lib, bad).is_err(), "{bad}");
    }
}

/// The screen stage builds exactly the tuples the fast tier ranks best (recomputed here over
/// every admitted tuple), and the same ones on a second run.
#[test]
fn the_screen_stage_keeps_the_fast_tiers_best_tuples() {
    let dir = std::env::temp_dir().join(format!("lumisift-screen-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let wf_text = format!(
        r#"[campaign]
name = "screen-test"
store = "store.sqlite"
fragments = ["{}"]
stages = ["screen", "enumerate"]
chunk_size = 50

[enumerate]
architectures = ["D-A", "D-A-D"]
max_mol_weight = 800.0

[screen]
pass_fraction = 0.05
"#,
        concat!(env!("CARGO_MANIFEST_DIR"), "/fragments")
    );
    let path = dir.join("wf.toml");
    std::fs::write(&path, &wf_text).unwrap();
    let wf = lumisift::campaign::Workflow::load(&path).unwrap();
    let opts = lumisift::campaign::RunOptions {
        shard: None,
        progress: lumisift::campaign::Progress::Quiet,
    };
    let s = lumisift::campaign::run(&wf, &opts).unwrap();
    let sc = s.screen.expect("screen ran");
    let admitted = s.counts.admitted;
    assert_eq!(sc.passed, (admitted as f64 * 0.05).ceil() as u64);
    assert_eq!(s.selected, sc.passed);
    // Recompute.
    let lib = fasttier::library();
    let set = fasttier::cards();
    let screen = wf.screen.as_ref().expect("screen settings");
    let bound = FastModel::default_model().bind(set, screen.refractive_index, screen.temperature_k);
    let en = Enumerator::new(lib, &wf.enumerate.as_ref().unwrap().params).unwrap();
    // The best `passed` tuples by a model's score, and how many it refines (ridge part at or
    // above its gate: every score at least its gate score).
    let best = |bound: &lumisift::fast::BoundModel| {
        let mut all: Vec<(f64, usize, String)> = Vec::new();
        let mut ord = 0;
        en.for_each(|e| {
            if let TupleEvent::Admitted(t) = e {
                if let Some(fe) = bound.predict(set, &t) {
                    all.push((fe.score, ord, t.key(lib)));
                }
                ord += 1;
            }
            ControlFlow::Continue(())
        });
        all.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
        let mut want: Vec<String> = all
            .iter()
            .take(sc.passed as usize)
            .map(|x| x.2.clone())
            .collect();
        want.sort();
        want
    };
    let want = best(&bound);
    // The summary says where the trees' gate lies and how many scores they refined.
    let gate_score = bound.gate_score().expect("the shipped model has a gate");
    assert_eq!(sc.gate_score, Some(gate_score));
    let refined = sc.refined.expect("counted on the screener's path");
    assert!(
        refined > 0 && refined < sc.scored,
        "{refined} of {}",
        sc.scored
    );
    let stored = |p: &std::path::Path| -> Vec<String> {
        let c = rusqlite::Connection::open(p).unwrap();
        let mut st = c
            .prepare("SELECT tuple_key FROM tuples ORDER BY tuple_key")
            .unwrap();
        st.query_map([], |r| r.get::<_, String>(0))
            .unwrap()
            .map(|r| r.unwrap())
            .collect()
    };
    assert_eq!(stored(&wf.store), want);
    // A second run into a fresh store: identical.
    let path2 = dir.join("wf2.toml");
    std::fs::write(&path2, wf_text.replace("store.sqlite", "store2.sqlite")).unwrap();
    let wf2 = lumisift::campaign::Workflow::load(&path2).unwrap();
    lumisift::campaign::run(&wf2, &opts).unwrap();
    assert_eq!(stored(&wf2.store), want);
    // With `refine_all` the trees refine every tuple: the best by the ungated score.
    let path3 = dir.join("wf3.toml");
    std::fs::write(
        &path3,
        wf_text.replace("store.sqlite", "store3.sqlite").replace(
            "pass_fraction = 0.05\n",
            "pass_fraction = 0.05\nrefine_all = true\n",
        ),
    )
    .unwrap();
    let wf3 = lumisift::campaign::Workflow::load(&path3).unwrap();
    let s3 = lumisift::campaign::run(&wf3, &opts).unwrap();
    let sc3 = s3.screen.expect("screen ran");
    assert_eq!(sc3.gate_score, None);
    let mut ungated = bound.clone();
    ungated.refine_all();
    assert_eq!(stored(&wf3.store), best(&ungated));
    let _ = std::fs::remove_dir_all(&dir);
}

/// A screen needs its enumeration and refuses to be mixed with sampling.
#[test]
fn screen_settings_are_checked() {
    let base = |stages: &str, extra: &str| {
        format!(
            "[campaign]\nname = \"x\"\nstore = \"s.sqlite\"\nfragments = [\"f\"]\nstages = {stages}\n\
             [enumerate]\narchitectures = [\"D-A\"]\n{extra}\n[screen]\npass_fraction = 0.1\n"
        )
    };
    let p = std::path::Path::new("/tmp/wf.toml");
    let e = lumisift::campaign::Workflow::parse(p, &base("[\"screen\"]", ""))
        .unwrap_err()
        .to_string();
    assert!(e.contains("list both"), "{e}");
    let e =
        lumisift::campaign::Workflow::parse(p, &base("[\"screen\", \"enumerate\"]", "sample = 10"))
            .unwrap_err()
            .to_string();
    assert!(e.contains("sample"), "{e}");
    let e = lumisift::campaign::Workflow::parse(
        p,
        &base("[\"screen\", \"enumerate\"]", "").replace("0.1", "1.5"),
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("pass_fraction"), "{e}");
    let wf = lumisift::campaign::Workflow::parse(
        p,
        &base("[\"screen\", \"enumerate\"]", "").replace("0.1\n", "0.1\ntrees = false\n"),
    )
    .unwrap();
    assert!(!wf.screen.expect("screen").trees);
    let wf =
        lumisift::campaign::Workflow::parse(p, &base("[\"screen\", \"enumerate\"]", "")).unwrap();
    let sc = wf.screen.expect("screen");
    assert!(
        sc.trees && !sc.refine_all,
        "trees behind their gate by default"
    );
    let wf = lumisift::campaign::Workflow::parse(
        p,
        &base("[\"screen\", \"enumerate\"]", "").replace("0.1\n", "0.1\nrefine_all = true\n"),
    )
    .unwrap();
    assert!(wf.screen.expect("screen").refine_all);
}

/// The screen's fast path gives the full prediction's ordering key: at the score's own
/// temperature the screen score (shifted by the refractive index's log10 n² alone), at another
/// temperature the merit rewritten in logarithms (no f or ΔEST formed), equal to
/// `photophysics::log10_tadf_rate` of the predicted S1, ΔEST and f. The screen's trees with
/// the pair-table descriptors' mask rows looked up per entry (computed when the model is
/// bound) give exactly the scores of the trees counted from the descriptors alone, with best
/// dimers known and unknown, bridged best arms (halves known or standing in) and direct ones.
#[test]
fn the_fast_score_equals_the_full_prediction() {
    let lib = fasttier::library();
    let set = fasttier::cards();
    let model = FastModel::default_model();
    let at_fit = model.bind(
        set,
        model.screen.refractive_index,
        model.screen.temperature_k,
    );
    assert!(
        at_fit.entry_masks_in_use(),
        "the shipped forest takes per-entry rows"
    );
    let mut counted = at_fit.clone();
    counted.drop_entry_masks();
    assert!(!counted.entry_masks_in_use());
    let denser = model.bind(set, 1.8, model.screen.temperature_k);
    let warmer = model.bind(set, 1.8, 320.0);
    // k_r ∝ n² (Strickler–Berg / Einstein A): every score moves by 2·log10(1.8/n_fit).
    let shift = 2.0 * (1.8 / model.screen.refractive_index).log10();
    let params = EnumerateParams {
        architectures: Architecture::ALL.to_vec(),
        max_mol_weight: 800.0,
        ..EnumerateParams::default()
    };
    let en = Enumerator::new(lib, &params).unwrap();
    let mut n = 0;
    // The screen's stream path (arm records reused from the tuple before) gives exactly the
    // numbers of a fresh description, on the enumeration's own order and on every third tuple.
    let mut stream = Describer::new(set);
    let mut skipping = Describer::new(set);
    let mut counting = Describer::new(set);
    // The cascade's screener (arm records kept per run of a core) gives the same scores up to
    // the order of additions, with and without trees, on the stream and on every third tuple;
    // at another temperature it scores through the descriptors, exactly.
    let mut ridge = at_fit.clone();
    ridge.drop_trees();
    let mut screener = Screener::new(&at_fit, set);
    let mut screener_skipping = Screener::new(&at_fit, set);
    let mut screener_ridge = Screener::new(&ridge, set);
    let mut screener_warmer = Screener::new(&warmer, set);
    assert!(screener.uses_records() && screener_ridge.uses_records());
    assert!(!screener_warmer.uses_records() && !Screener::new(&counted, set).uses_records());
    let mut ridge_stream = Describer::new(set);
    // The trees refine only tuples whose ridge part reaches the model's gate; the others
    // score their ridge part plus the least the trees can give, so they rank below every
    // refined tuple. `refine_all` lifts the gate: the same scores above it, never lower
    // ones below it.
    let (gate, tree_floor) = at_fit.gate();
    let gate_score = at_fit.gate_score().expect("the shipped model has a gate");
    assert!(gate.is_finite() && tree_floor < 0.0, "{gate} {tree_floor}");
    let mut all = at_fit.clone();
    all.refine_all();
    assert_eq!(all.gate_score(), None);
    // A screen keeps the gate while it passes no more than the share of the fitting rows
    // the gate lets through (1 − its quantile), and lifts it beyond.
    let q = model.screen.gate_quantile.expect("gate quantile");
    let mut narrow = at_fit.clone();
    assert!(narrow.gate_for_pass(1.0 - q - 0.01));
    assert_eq!(narrow.gate_score(), Some(gate_score));
    assert!(!narrow.gate_for_pass(1.0 - q + 0.01));
    assert_eq!(narrow.gate_score(), None);
    let mut screener_all = Screener::new(&all, set);
    let mut all_stream = Describer::new(set);
    // (refined, below the gate) among the tuples that are not a single D–A dimer, and the
    // lowest refined and highest unrefined scores.
    let (mut refined, mut below) = (0u64, 0u64);
    let (mut lowest_refined, mut highest_below) = (f64::INFINITY, f64::NEG_INFINITY);
    // A model without the products (its own scores, not the shipped ones) is scored alike by
    // the screener and the descriptor path.
    let mut plain_model = model.clone();
    plain_model.screen.products = false;
    plain_model.bridged.screen_products.clear();
    plain_model.multi_arm.screen_products.clear();
    let plain = plain_model.bind(
        set,
        model.screen.refractive_index,
        model.screen.temperature_k,
    );
    let mut screener_plain = Screener::new(&plain, set);
    assert!(screener_plain.uses_records());
    let mut plain_stream = Describer::new(set);
    let same =
        |a: Option<(f64, bool)>, b: Option<(f64, bool)>, t: &lumisift::combine::Tuple| match (a, b)
        {
            (None, None) => {}
            (Some((x, u)), Some((y, v))) => {
                assert!(
                    (x - y).abs() <= 1e-9 * x.abs().max(1.0),
                    "{x} vs {y}: {t:?}"
                );
                assert_eq!(u, v, "{t:?}");
            }
            _ => panic!("{a:?} vs {b:?}: {t:?}"),
        };
    // (bridged best arm, direct best arm, no dimer known) among the fitted classes
    let mut seen = [0usize; 3];
    // Tuples that are not a single D–A dimer: scored with the trees.
    let mut treed = 0usize;
    // (run of a core and side, site, arm)
    let mut triples = std::collections::HashSet::new();
    let (mut run, mut key) = (0usize, None);
    en.for_each(|e| {
        if let TupleEvent::Admitted(t) = e {
            n += 1;
            let run_key = (t.core, lumisift::fast::features::core_is_donor(set, &t));
            if key != Some(run_key) {
                key = Some(run_key);
                run += 1;
            }
            for (site, &arm) in t.arms.iter().enumerate() {
                triples.insert((run, site, arm));
            }
            let (mut x, mut y) = ([0.0; N_FEATURES], [0.0; N_FEATURES]);
            let fresh = lumisift::fast::describe(set, &t, &mut x);
            assert_eq!(stream.describe(&t, &mut y), fresh);
            assert_eq!(x.map(f64::to_bits), y.map(f64::to_bits));
            let streamed = at_fit.score_stream(&mut stream, &t);
            assert_eq!(streamed, at_fit.score(set, &t));
            assert_eq!(
                streamed.map(|v| v.0.to_bits()),
                counted
                    .score_stream(&mut counting, &t)
                    .map(|v| v.0.to_bits()),
                "{t:?}"
            );
            same(screener.score(&t), streamed, &t);
            let ridged = ridge.score_stream(&mut ridge_stream, &t);
            same(screener_ridge.score(&t), ridged, &t);
            let ungated = all.score_stream(&mut all_stream, &t);
            same(screener_all.score(&t), ungated, &t);
            if let (Some(s), Some((r, _)), Some((v, _)), Some((u, _))) =
                (fresh, ridged, streamed, ungated)
                && s.class != TupleClass::Dimer
            {
                treed += 1;
                if r >= gate {
                    refined += 1;
                    lowest_refined = lowest_refined.min(v);
                    assert_eq!(v.to_bits(), u.to_bits(), "{t:?}");
                } else {
                    below += 1;
                    highest_below = highest_below.max(v);
                    assert!(
                        (v - (r + tree_floor)).abs() <= 1e-9 * v.abs().max(1.0),
                        "{t:?}"
                    );
                    assert!(u >= v, "{u} < {v}: {t:?}");
                }
            }
            if n % 3 == 0 {
                same(screener_skipping.score(&t), streamed, &t);
            }
            if n % 5 == 0 {
                same(
                    screener_plain.score(&t),
                    plain.score_stream(&mut plain_stream, &t),
                    &t,
                );
            }
            if n % 11 == 0 {
                assert_eq!(screener_warmer.score(&t), warmer.score(set, &t));
            }
            if let Some(s) = fresh
                && s.class != TupleClass::Dimer
            {
                seen[0] += usize::from(s.halves.is_some());
                seen[1] += usize::from(s.halves.is_none() && s.dimer_entry.is_some());
                seen[2] += usize::from(s.dimer_entry.is_none());
            }
            if n % 3 == 0 {
                assert_eq!(skipping.describe(&t, &mut y), fresh);
                assert_eq!(x.map(f64::to_bits), y.map(f64::to_bits));
            }
            if n % 11 == 0 {
                let full = warmer.predict(set, &t).unwrap();
                let (m, unseen) = warmer.score(set, &t).unwrap();
                assert!((m - full.merit).abs() < 1e-9, "{m} vs {}", full.merit);
                assert_eq!(full.score, m);
                assert_eq!(unseen, full.unseen_fragment);
                let fit = at_fit.predict(set, &t).unwrap();
                let (s, _) = at_fit.score(set, &t).unwrap();
                assert_eq!(fit.score, s);
                let (d, _) = denser.score(set, &t).unwrap();
                assert!((d - s - shift).abs() < 1e-9, "{d} vs {s} + {shift}");
            }
        }
        ControlFlow::Continue(())
    });
    assert!(n > 1000);
    assert!(seen[0] > 100 && seen[1] > 100 && seen[2] > 0, "{seen:?}");
    // Every tuple that reaches the trees either finds its early trees' sum or makes it, and
    // both happen (the memo is exercised, not bypassed; this enumeration's short runs of a
    // core find few).
    assert!(
        refined > 100 && below > 100,
        "{refined} refined, {below} below the gate"
    );
    assert!(
        lowest_refined >= gate_score && highest_below < gate_score,
        "{lowest_refined} {highest_below} {gate_score}"
    );
    assert_eq!(screener.refined(), Some(refined));
    assert_eq!(screener_all.refined(), Some(treed as u64));
    let (hits, misses) = screener.memo_counts();
    assert_eq!(hits + misses, refined);
    assert!(hits > 0 && misses > 0, "{hits} found, {misses} summed");
    // Records are made once per (site, arm) per run of a core and side: none made twice in a
    // run, none shared by two arms.
    assert_eq!(screener.records_made(), triples.len() as u64, "{n} tuples");
    assert!(triples.len() < n, "{} triples, {n} tuples", triples.len());
}
