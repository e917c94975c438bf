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
    let set = fasttier::cards();
    eprintln!("cards: {:.2} s", t0.elapsed().as_secs_f64());
    let (fit, test) = fasttier::samples(lib, set);
    let ids: Vec<String> = lib.fragments.iter().map(|f| f.id.clone()).collect();
    let mut model = fit_model(&fit, &ids, ALPHA).expect("fit");
    let bound = model.bind(set, fasttier::N_HOST, fasttier::T_K);
    let ev = evaluate(&test, &bound);
    println!("fit {} / test {}", fit.len(), test.len());
    println!("{ev:#?}");
    model.fit.fixture = fasttier::FIXTURE.into();
    model.fit.split = fasttier::SPLIT.into();
    model.fit.held_out = ev;
    if write {
        let text = format!(
            "# The fast fragment tier's model (src/fast/model.rs), written by\n\
             # `cargo run --release --example fit_fast_tier -- --write` from π-tier results on a\n\
             # seeded sample of the shipped library. [fit] holds its figures on held-out tuples.\n{}",
            toml::to_string(&model).expect("serialise")
        );
        let out = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("data/fast-tier.toml");
        std::fs::write(&out, text).expect("write data/fast-tier.toml");
        println!("wrote data/fast-tier.toml");
    }
}
