//! Fit the fast fragment tier to π-tier results and report how it does on held-out tuples.
//!
//!     cargo run --release --example fit_fast_tier -- [--write]
//!
//! Reads `tests/fixtures/fast_tier/pi_tier.csv`, splits it by candidate id (see
//! `tests/support/fasttier.rs`), fits by ridge regression on the fitting rows and prints
//! Spearman ρ, MAE and the cascade's retention of the π tier's top 100 (by log10 k_TADF) on
//! the test rows. With `--write` it writes `data/fast-tier.toml` (the integration test
//! `fast_tier` then checks the file against the same data).

#[path = "../tests/support/fasttier.rs"]
mod fasttier;

use lumisift::fast::fit::{evaluate, fit_model};

const ALPHA: f64 = 1.0;

fn main() {
    let write = std::env::args().any(|a| a == "--write");
    let lib = fasttier::library();
    let t0 = std::time::Instant::now();
    let set = fasttier::cards(&lib);
    eprintln!("cards: {:.2} s", t0.elapsed().as_secs_f64());
    let (fit, test) = fasttier::samples(&lib, &set);
    let ids: Vec<String> = lib.fragments.iter().map(|f| f.id.clone()).collect();
    let mut model = fit_model(&fit, &ids, ALPHA).expect("fit");
    let bound = model.bind(&set, fasttier::N_HOST, fasttier::T_K);
    let ev = evaluate(
        &test,
        |s| {
            let (a, b, c, _) = bound.predict_descriptors(&s.x, s.donor, s.acceptor, s.bridge);
            (a, b, c)
        },
        fasttier::N_HOST,
        fasttier::T_K,
    );
    println!("fit {} / test {}", fit.len(), test.len());
    println!("{ev:#?}");
    let f = &mut model.fit;
    f.fixture = "tests/fixtures/fast_tier/pi_tier.csv".into();
    f.split = fasttier::SPLIT.into();
    f.n_test = ev.n;
    f.spearman_s1 = ev.spearman_s1;
    f.spearman_t1 = ev.spearman_t1;
    f.spearman_delta_est = ev.spearman_delta_est;
    f.spearman_f = ev.spearman_f;
    f.spearman_merit = ev.spearman_merit;
    f.mae_s1_ev = ev.mae_s1_ev;
    f.mae_t1_ev = ev.mae_t1_ev;
    f.mae_delta_est_ev = ev.mae_delta_est_ev;
    f.top100_kept_at_10pct = ev.top100_kept_at_10pct;
    f.pass_fraction_for_95pct = ev.pass_fraction_for_95pct;
    if write {
        let text = format!(
            "# The fast fragment tier's model (src/fast/model.rs), written by\n\
             # `cargo run --release --example fit_fast_tier -- --write` from π-tier results on a\n\
             # seeded sample of the shipped library. [fit] holds its figures on held-out tuples.\n{}",
            toml::to_string(&model).expect("serialise")
        );
        std::fs::write("data/fast-tier.toml", text).expect("write data/fast-tier.toml");
        println!("wrote data/fast-tier.toml");
    }
}
