//! Print the PPP model (core Hamiltonian, γ, electron count) of the criterion `pi` bench
//! molecules at a 60° twist as JSON, for `benches/pyscf_model_route.py`, which times the same
//! model solved with PySCF (speed ratio in the contributor guide):
//! `cargo run --release --example export_ppp_model > /tmp/ppp_models.json`.
use lumisift::pi::params::PppParams;

#[path = "../benches/support/pi_molecules.rs"]
mod pi_molecules;

fn main() {
    let ppp = PppParams::default_set();
    let mut out = Vec::new();
    for (name, smi) in pi_molecules::MOLECULES {
        let model = pi_molecules::twisted_model(smi, &ppp).1.model;
        let g = model.gamma();
        let h = model.core_hamiltonian(&g);
        let rows = |x: &nalgebra::DMatrix<f64>| -> Vec<Vec<f64>> {
            (0..x.nrows())
                .map(|i| (0..x.ncols()).map(|j| x[(i, j)]).collect())
                .collect()
        };
        out.push(serde_json::json!({
            "name": name,
            "smiles": smi,
            "n_sites": model.n_sites(),
            "n_electrons": model.n_electrons(),
            "h": rows(&h),
            "gamma": rows(&g),
        }));
    }
    println!("{}", serde_json::to_string(&out).unwrap());
}
