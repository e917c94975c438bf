//! Print the layout of a SMILES as XYZ (with hydrogens) and the worst bond-length deviation:
//! `cargo run --example layout_check -- 'SMILES'`.
use lumisift::chem::parse_smiles;
use lumisift::geometry::{ideal_length, layout, with_hydrogens, xyz_block};

fn main() {
    let smi = std::env::args().nth(1).unwrap_or_else(|| "c1ccccc1".into());
    let mol = parse_smiles(&smi).expect("valid SMILES");
    let c = layout(&mol);
    let mut worst: f64 = 0.0;
    for e in mol.graph.edge_indices() {
        let (a, b) = mol.graph.edge_endpoints(e).unwrap();
        let (pa, pb) = (c.points[a.index()], c.points[b.index()]);
        let d =
            ((pa[0] - pb[0]).powi(2) + (pa[1] - pb[1]).powi(2) + (pa[2] - pb[2]).powi(2)).sqrt();
        let want = ideal_length(
            mol.atom(a).element,
            mol.atom(b).element,
            mol.bond(e),
            mol.atom(a).aromatic,
            mol.atom(b).aromatic,
        );
        worst = worst.max((d - want).abs());
    }
    let mut close: f64 = f64::INFINITY;
    let n = mol.atom_count();
    for i in 0..n {
        for j in 0..i {
            let (a, b) = (
                petgraph::graph::NodeIndex::new(i),
                petgraph::graph::NodeIndex::new(j),
            );
            if mol.bond_between(a, b).is_some()
                || mol
                    .neighbours(a)
                    .any(|(x, _)| mol.bond_between(x, b).is_some())
            {
                continue;
            }
            let (pa, pb) = (c.points[i], c.points[j]);
            let d = ((pa[0] - pb[0]).powi(2) + (pa[1] - pb[1]).powi(2) + (pa[2] - pb[2]).powi(2))
                .sqrt();
            close = close.min(d);
        }
    }
    eprintln!(
        "worst bond deviation {worst:.3} Å; closest non-bonded (beyond 1-3) heavy pair {close:.3} Å"
    );
    let (mh, ch) = with_hydrogens(&mol, &c);
    print!("{}", xyz_block(&mh, &ch, &smi));
}
