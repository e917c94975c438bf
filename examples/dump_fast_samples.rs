//! Write the fast tier's fit and test samples (descriptors, class, fragments, π-tier truth and
//! the shipped model's prediction) as CSV on standard output, for exploring models outside
//! the crate:
//!
//!     cargo run --release --example dump_fast_samples > /tmp/fast-samples.csv

#[path = "../tests/support/fasttier.rs"]
mod fasttier;

use lumisift::fast::{FEATURE_NAMES, FastModel, TupleClass};

fn main() {
    let lib = fasttier::library();
    let set = fasttier::cards();
    let (fit, test) = fasttier::samples(lib, set);
    let bound = FastModel::default_model().bind(set, fasttier::N_HOST, fasttier::T_K);
    let mut out = csv::Writer::from_writer(std::io::stdout());
    let mut head: Vec<String> = vec![
        "split", "class", "donor", "acceptor", "bridge", "s1", "dest", "f", "p_s1", "p_dest", "p_f",
    ]
    .into_iter()
    .map(String::from)
    .collect();
    head.extend(FEATURE_NAMES.iter().map(|s| s.to_string()));
    out.write_record(&head).expect("write");
    for (split, rows) in [("fit", &fit), ("test", &test)] {
        for s in rows.iter() {
            let (a, b, c, _) = bound.predict_descriptors(&s.x, &s.summary);
            let class = match s.summary.class {
                TupleClass::Dimer => "dimer",
                TupleClass::Bridged => "bridged",
                TupleClass::MultiArm => "multi",
            };
            let mut r = vec![
                split.to_string(),
                class.to_string(),
                lib.fragments[s.summary.donor].id.clone(),
                lib.fragments[s.summary.acceptor].id.clone(),
                s.summary
                    .bridge
                    .map(|b| lib.fragments[b].id.clone())
                    .unwrap_or_default(),
            ];
            for v in [s.s1_ev, s.delta_est_ev, s.f_s1, a, b, c] {
                r.push(format!("{v}"));
            }
            r.extend(s.x.iter().map(|v| format!("{v}")));
            out.write_record(&r).expect("write");
        }
    }
}
