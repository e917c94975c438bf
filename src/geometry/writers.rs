//! XYZ and SDF (MDL V2000 molfile) text for a molecule with coordinates, so a user can start
//! their own quantum-chemistry job from it. Format references: the XYZ convention (atom count,
//! comment line, `symbol x y z` in Å); MDL CTfile formats (BIOVIA, "CTfile Formats", V2000
//! connection table: counts line, atom block, bond block, `M  CHG`, `M  ISO`, `M  END`, data items,
//! `$$$$`).

use std::fmt::Write;

use crate::chem::{BondOrder, Molecule};

use super::Coordinates;

/// An XYZ block. Implicit hydrogens are not written: call `with_hydrogens` first for a complete
/// structure.
pub fn xyz_block(mol: &Molecule, coords: &Coordinates, comment: &str) -> String {
    let mut s = String::new();
    let atoms: Vec<_> = mol.atoms().filter(|&a| !mol.atom(a).is_dummy()).collect();
    let _ = writeln!(s, "{}", atoms.len());
    let _ = writeln!(s, "{}", comment.replace('\n', " "));
    for a in atoms {
        let p = coords.points[a.index()];
        let _ = writeln!(
            s,
            "{:<2} {:>12.6} {:>12.6} {:>12.6}",
            mol.atom(a).symbol(),
            p[0],
            p[1],
            p[2]
        );
    }
    s
}

/// One SDF record (V2000) with optional data items; bonds in their Kekulé orders.
pub fn sdf_block(
    mol: &Molecule,
    coords: &Coordinates,
    title: &str,
    properties: &[(&str, String)],
) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "{}", title.replace('\n', " "));
    let _ = writeln!(s, "  lumisift          3D");
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "{:>3}{:>3}  0  0  0  0  0  0  0  0999 V2000",
        mol.atom_count(),
        mol.bond_count()
    );
    for a in mol.atoms() {
        let p = coords.points[a.index()];
        let atom = mol.atom(a);
        let sym = if atom.is_dummy() { "R" } else { atom.symbol() };
        let _ = writeln!(
            s,
            "{:>10.4}{:>10.4}{:>10.4} {:<3} 0  0  0  0  0  0  0  0  0  0  0  0",
            p[0], p[1], p[2], sym
        );
    }
    for e in mol.graph.edge_indices() {
        let (x, y) = mol.graph.edge_endpoints(e).expect("edge exists");
        let order = match mol.bond(e).order {
            BondOrder::Single => 1,
            BondOrder::Double => 2,
            BondOrder::Triple => 3,
            BondOrder::Quadruple => 8,
        };
        let _ = writeln!(s, "{:>3}{:>3}{:>3}  0", x.index() + 1, y.index() + 1, order);
    }
    let charged: Vec<_> = mol.atoms().filter(|&a| mol.atom(a).charge != 0).collect();
    for chunk in charged.chunks(8) {
        let _ = write!(s, "M  CHG{:>3}", chunk.len());
        for &a in chunk {
            let _ = write!(s, " {:>3} {:>3}", a.index() + 1, mol.atom(a).charge);
        }
        let _ = writeln!(s);
    }
    let labelled: Vec<_> = mol.atoms().filter(|&a| mol.atom(a).isotope != 0).collect();
    for chunk in labelled.chunks(8) {
        let _ = write!(s, "M  ISO{:>3}", chunk.len());
        for &a in chunk {
            let _ = write!(s, " {:>3} {:>3}", a.index() + 1, mol.atom(a).isotope);
        }
        let _ = writeln!(s);
    }
    let _ = writeln!(s, "M  END");
    for (k, v) in properties {
        let _ = writeln!(s, ">  <{k}>");
        let _ = writeln!(s, "{v}");
        let _ = writeln!(s);
    }
    let _ = writeln!(s, "$$$$");
    s
}
