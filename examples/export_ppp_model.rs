//! Print the PPP model (core Hamiltonian, γ, electron count) of the criterion `pi` bench
//! molecules at a 60° twist as JSON, for `benches/pyscf_model_route.py`, which times the same
//! model solved with PySCF (speed ratio in the contributor guide):
//! `cargo run --release --example export_ppp_model > /tmp/ppp_models.json`.
use lumisift::chem::parse_smiles;
use lumisift::geometry::{layout, rotate_about_bond};
use lumisift::pi::build::build_model;
use lumisift::pi::estimate::links;
use lumisift::pi::params::PppParams;

fn main() {
    let ppp = PppParams::default_set();
    let mut out = Vec::new();
    for (name, smi) in [
        ("21-site D-A", "N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21"),
        (
            "48-site D-B-A",
            "c1ccc2c(c1)Oc1ccccc1N2c1ccc(cc1)-c1ccc(cc1)-c1nc(nc(n1)-c1ccccc1)-c1ccccc1",
        ),
    ] {
        let m = parse_smiles(smi).unwrap();
        let mut coords = layout(&m);
        for (a, b) in links(&m) {
            rotate_about_bond(&m, &mut coords.points, a, b, 60f64.to_radians());
        }
        let model = build_model(&m, &coords, &ppp).unwrap().model;
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
