//! Molecular facts: formula, masses, counts, and the stable candidate identity.

use std::fmt::Write;

use serde::Serialize;

use super::element;
use super::error::ChemError;
use super::mol::{BondOrder, Molecule};
use super::rings;
use super::smiles::write::CANONICALISER_VERSION;

/// Electron rest mass in u (CODATA 2018: 5.485 799 090 65 × 10⁻⁴ u), subtracted per positive
/// charge (added per negative charge) in the monoisotopic mass of an ion.
pub const ELECTRON_MASS_U: f64 = 5.485_799_090_65e-4;

/// Atom counts by element (implicit hydrogens included, dummy atoms excluded), natural and
/// labelled separately. Sums over it run in a fixed element order, so masses do not depend on
/// atom order even in the last floating-point digit.
struct Composition {
    natural: [u32; 119],
    /// (element, mass number, count), sorted.
    labelled: Vec<(u8, u16, u32)>,
}

fn composition(mol: &Molecule) -> Composition {
    let mut natural = [0u32; 119];
    let mut labelled: Vec<(u8, u16, u32)> = Vec::new();
    for atom in mol.graph.node_weights() {
        natural[1] += atom.hydrogens as u32;
        if atom.element == element::DUMMY {
            continue;
        }
        if atom.isotope > 0 {
            match labelled
                .iter_mut()
                .find(|(z, a, _)| *z == atom.element && *a == atom.isotope)
            {
                Some(e) => e.2 += 1,
                None => labelled.push((atom.element, atom.isotope, 1)),
            }
        } else {
            natural[atom.element as usize] += 1;
        }
    }
    labelled.sort_unstable();
    Composition { natural, labelled }
}

/// Molecular formula in Hill order: C first, then H, then the other elements alphabetically; with
/// no carbon, all alphabetically. Isotopically labelled atoms count under their element (as
/// common toolkits do by default). A net charge is appended as `+`, `-`, `+2`, `-2`, …
/// Dummy atoms (`*`) are not counted.
///
/// Reference: E. A. Hill, J. Am. Chem. Soc. 22, 478 (1900); Chemical Abstracts convention.
pub fn formula(mol: &Molecule) -> String {
    let comp = composition(mol);
    let mut counts: Vec<(&'static str, u32)> = Vec::new();
    for z in 1..=118u8 {
        let n = comp.natural[z as usize]
            + comp
                .labelled
                .iter()
                .filter(|l| l.0 == z)
                .map(|l| l.2)
                .sum::<u32>();
        if n > 0 {
            counts.push((element::symbol(z), n));
        }
    }
    let has_c = counts.iter().any(|c| c.0 == "C");
    counts.sort_by_key(|&(sym, _)| match (has_c, sym) {
        (true, "C") => (0, sym),
        (true, "H") => (1, sym),
        _ => (2, sym),
    });
    let mut out = String::new();
    for (sym, n) in counts {
        out.push_str(sym);
        if n > 1 {
            let _ = write!(out, "{n}");
        }
    }
    match mol.formal_charge() {
        0 => {}
        1 => out.push('+'),
        -1 => out.push('-'),
        q if q > 0 => {
            let _ = write!(out, "+{q}");
        }
        q => {
            let _ = write!(out, "-{}", -q);
        }
    }
    out
}

fn mass_of(comp: &Composition, per_element: impl Fn(u8) -> Option<f64>) -> Result<f64, ChemError> {
    let mut m = 0.0;
    for z in 1..=118u8 {
        let n = comp.natural[z as usize];
        if n > 0 {
            let w = per_element(z)
                .ok_or_else(|| ChemError::NoAtomicWeight(element::symbol(z).to_string()))?;
            m += n as f64 * w;
        }
    }
    for &(z, a, n) in &comp.labelled {
        m += n as f64 * isotope_mass(z, a)?;
    }
    Ok(m)
}

/// Average molecular weight (g/mol) from IUPAC 2021 standard atomic weights; labelled atoms use
/// their isotope's mass.
pub fn average_mass(mol: &Molecule) -> Result<f64, ChemError> {
    mass_of(&composition(mol), element::standard_weight)
}

/// Monoisotopic mass (u): every atom as its most abundant isotope (labelled atoms as their
/// isotope), less the electron masses of a net positive charge.
pub fn monoisotopic_mass(mol: &Molecule) -> Result<f64, ChemError> {
    let m = mass_of(&composition(mol), element::monoisotopic_mass)?;
    Ok(m - mol.formal_charge() as f64 * ELECTRON_MASS_U)
}

fn isotope_mass(z: u8, a: u16) -> Result<f64, ChemError> {
    element::isotope_mass(z, a).ok_or_else(|| ChemError::NoIsotopeMass {
        element: element::symbol(z).to_string(),
        isotope: a,
    })
}

/// Atoms other than hydrogen (any isotope) and dummy atoms.
pub fn heavy_atom_count(mol: &Molecule) -> usize {
    mol.graph.node_weights().filter(|a| a.element > 1).count()
}

/// Atoms flagged aromatic by perception.
pub fn aromatic_atom_count(mol: &Molecule) -> usize {
    mol.graph.node_weights().filter(|a| a.aromatic).count()
}

/// Rotatable bonds: single, not on a ring, between two atoms that each have at least two heavy
/// neighbours, neither of them in a triple bond, and not the C–N bond of a secondary amide
/// (C(=O)–NH). This is the common "non-strict" definition (as in Lipinski-type descriptors);
/// CF₃ and tert-butyl rotors therefore count.
pub fn rotatable_bond_count(mol: &Molecule) -> usize {
    let ring_bond = rings::ring_bonds(mol);
    let heavy_deg: Vec<usize> = mol.atoms().map(|a| mol.heavy_degree(a)).collect();
    let has_triple: Vec<bool> = mol
        .atoms()
        .map(|a| {
            mol.neighbours(a)
                .any(|(_, e)| mol.bond(e).order == BondOrder::Triple)
        })
        .collect();
    let is_carbonyl_c = |a: petgraph::graph::NodeIndex| {
        mol.atom(a).element == 6
            && mol
                .neighbours(a)
                .any(|(o, e)| mol.atom(o).element == 8 && mol.bond(e).order == BondOrder::Double)
    };
    mol.graph
        .edge_indices()
        .filter(|&e| {
            let b = mol.bond(e);
            if b.order != BondOrder::Single || b.aromatic || ring_bond[e.index()] {
                return false;
            }
            let (x, y) = mol.graph.edge_endpoints(e).expect("edge exists");
            if mol.atom(x).element <= 1 || mol.atom(y).element <= 1 {
                return false;
            }
            if heavy_deg[x.index()] < 2 || heavy_deg[y.index()] < 2 {
                return false;
            }
            if has_triple[x.index()] || has_triple[y.index()] {
                return false;
            }
            let amide = |c, nn: petgraph::graph::NodeIndex| {
                is_carbonyl_c(c) && mol.atom(nn).element == 7 && mol.total_hydrogens(nn) == 1
            };
            !(amide(x, y) || amide(y, x))
        })
        .count()
}

/// A stable 128-bit candidate identity: the first 16 bytes of BLAKE3 over
/// `"lumisift-canon-v{CANONICALISER_VERSION}\n" + canonical SMILES`, as 32 lowercase hex digits.
/// Never derived from a randomised hasher, so it is the same on every machine and run.
pub fn candidate_id(canonical_smiles: &str) -> String {
    let mut h = blake3::Hasher::new();
    h.update(format!("lumisift-canon-v{CANONICALISER_VERSION}\n").as_bytes());
    h.update(canonical_smiles.as_bytes());
    let bytes = h.finalize();
    let mut s = String::with_capacity(32);
    for b in &bytes.as_bytes()[..16] {
        let _ = write!(s, "{b:02x}");
    }
    s
}

/// All per-molecule facts in one record.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct MolFacts {
    pub canonical_smiles: String,
    pub candidate_id: String,
    pub formula: String,
    pub mol_weight: f64,
    pub monoisotopic_mass: f64,
    pub heavy_atoms: usize,
    /// Cyclomatic number E − V + C (= size of the SSSR).
    pub rings: usize,
    pub aromatic_atoms: usize,
    pub rotatable_bonds: usize,
}

/// Compute [`MolFacts`] for a parsed molecule.
pub fn facts(mol: &Molecule) -> Result<MolFacts, ChemError> {
    let canonical_smiles = super::canonical_smiles(mol);
    Ok(MolFacts {
        candidate_id: candidate_id(&canonical_smiles),
        canonical_smiles,
        formula: formula(mol),
        mol_weight: average_mass(mol)?,
        monoisotopic_mass: monoisotopic_mass(mol)?,
        heavy_atoms: heavy_atom_count(mol),
        rings: rings::ring_count(mol),
        aromatic_atoms: aromatic_atom_count(mol),
        rotatable_bonds: rotatable_bond_count(mol),
    })
}
