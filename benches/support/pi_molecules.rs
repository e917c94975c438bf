//! The π-tier benchmark molecules, shared by `benches/pi.rs` and
//! `examples/export_ppp_model.rs` (whose PySCF timing must solve the very same models).

use lumisift::chem::{Molecule, parse_smiles};
use lumisift::geometry::{layout, rotate_about_bond};
use lumisift::pi::build::{BuiltModel, build_model};
use lumisift::pi::estimate::links;
use lumisift::pi::params::PppParams;

/// (label, SMILES): a carbazole–benzonitrile and a phenoxazine–biphenylene–diphenyltriazine.
pub const MOLECULES: [(&str, &str); 2] = [
    ("21-site D-A", "N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21"),
    (
        "48-site D-B-A",
        "c1ccc2c(c1)Oc1ccccc1N2c1ccc(cc1)-c1ccc(cc1)-c1nc(nc(n1)-c1ccccc1)-c1ccccc1",
    ),
];

/// Twist applied to every link of a benchmark molecule (degrees).
pub const TWIST_DEG: f64 = 60.0;

/// The molecule of `smiles` and its PPP model with every link at [`TWIST_DEG`].
pub fn twisted_model(smiles: &str, ppp: &PppParams) -> (Molecule, BuiltModel) {
    let m = parse_smiles(smiles).expect("benchmark SMILES parse");
    let mut coords = layout(&m);
    for (a, b) in links(&m) {
        rotate_about_bond(&m, &mut coords.points, a, b, TWIST_DEG.to_radians());
    }
    let built = build_model(&m, &coords, ppp).expect("benchmark model builds");
    (m, built)
}
