//! π-system perception: which atoms carry a π orbital in the PPP model and of which type.
//!
//! | type | atom | π electrons |
//! |---|---|---|
//! | C | carbon with a double or triple bond (sp2/sp), or aromatic | 1 |
//! | N1 | nitrogen with a double or triple bond (pyridine, imine, nitrile) | 1 |
//! | N2 | three-coordinate nitrogen, all single bonds, bonded to a π atom (amine, pyrrole, carbazole) | 2 |
//! | O1 / S1 | doubly bonded O (carbonyl) / S (thione) on a π carbon | 1 |
//! | O2 / S2 / Se2 | two-coordinate O / S / Se with single bonds next to a π atom | 2 |
//! | P1 / P2 | phosphorus with a ring double bond / three-coordinate P next to π atoms | 1 / 2 |
//! | B | three-coordinate boron, empty p orbital | 0 |
//! | F / Cl | halogen on a π atom | 2 |
//!
//! Sulfones (S with two S=O) and phosphine oxides (P=O) get no π orbital; the π carbons bonded
//! to them are marked for the inductive shift of the parameter set. A nitrile's out-of-plane π
//! component conjugates with the ring, its in-plane one does not: the C≡N pair is one C site and
//! one N1 site (science.md a.3). Saturated atoms are excluded. Lone-pair and halogen sites count
//! only next to a π atom of the 0/1-electron kinds, so an isolated ether or amine is not
//! conjugated.

use crate::chem::{BondOrder, Molecule};

/// Why an atom is (or is not) in the π system.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum PiSite {
    /// A π site of this type (a key of the parameter set).
    Site(&'static str),
    /// Not in the π system.
    None,
}

/// Inductive marks for π carbons next to σ-acceptor groups.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Inductive {
    pub sulfone: bool,
    pub phosphine_oxide: bool,
}

/// The π typing of a molecule.
#[derive(Debug, Clone, PartialEq)]
pub struct PiTyping {
    pub sites: Vec<PiSite>,
    pub inductive: Vec<Inductive>,
}

impl PiTyping {
    /// Atom indices of π sites, in atom order.
    pub fn site_atoms(&self) -> Vec<usize> {
        (0..self.sites.len())
            .filter(|&a| matches!(self.sites[a], PiSite::Site(_)))
            .collect()
    }
}

fn multiple(mol: &Molecule, a: crate::chem::AtomIdx) -> (usize, usize) {
    let mut doubles = 0;
    let mut triples = 0;
    for (_, e) in mol.neighbours(a) {
        match mol.bond(e).order {
            BondOrder::Double => doubles += 1,
            BondOrder::Triple => triples += 1,
            _ => {}
        }
    }
    (doubles, triples)
}

fn is_sulfone(mol: &Molecule, a: crate::chem::AtomIdx) -> bool {
    mol.atom(a).element == 16
        && mol
            .neighbours(a)
            .filter(|&(o, e)| mol.atom(o).element == 8 && mol.bond(e).order == BondOrder::Double)
            .count()
            >= 2
}

fn is_phosphine_oxide(mol: &Molecule, a: crate::chem::AtomIdx) -> bool {
    mol.atom(a).element == 15
        && mol.degree(a) + mol.atom(a).hydrogens as usize == 4
        && mol
            .neighbours(a)
            .any(|(o, e)| mol.atom(o).element == 8 && mol.bond(e).order == BondOrder::Double)
}

/// Perceive the π system of `mol` (Kekulé bonds, aromatic flags as the reader leaves them).
pub fn perceive(mol: &Molecule) -> PiTyping {
    let n = mol.atom_count();
    let mut sites = vec![PiSite::None; n];
    // Pass 1: atoms with their own multiple bonds or aromaticity, and boron.
    for a in mol.atoms() {
        let at = mol.atom(a);
        let (d, t) = multiple(mol, a);
        let unsat = d + t > 0 || at.aromatic;
        let deg = mol.degree(a) + at.hydrogens as usize;
        sites[a.index()] = match at.element {
            6 if unsat && at.charge == 0 => PiSite::Site("C"),
            7 if unsat && at.charge == 0 && deg <= 2 => PiSite::Site("N1"),
            8 if d == 1 && at.charge == 0 => PiSite::Site("O1"),
            16 if d == 1 && deg == 1 && at.charge == 0 => PiSite::Site("S1"),
            15 if unsat && deg <= 2 && at.charge == 0 => PiSite::Site("P1"),
            5 if deg == 3 && d == 0 && at.charge == 0 => PiSite::Site("B"),
            _ => PiSite::None,
        };
    }
    // A carbonyl O or thione S only counts on a π carbon; B only next to a π atom.
    for a in mol.atoms() {
        if let PiSite::Site(t) = sites[a.index()]
            && matches!(t, "O1" | "S1" | "B")
            && !mol
                .neighbours(a)
                .any(|(b, _)| matches!(sites[b.index()], PiSite::Site("C" | "N1")))
        {
            sites[a.index()] = PiSite::None;
        }
    }
    // Pass 2: lone-pair donors and halogens next to the π atoms of pass 1.
    let anchor = |sites: &Vec<PiSite>, a: crate::chem::AtomIdx| {
        mol.neighbours(a)
            .any(|(b, _)| matches!(sites[b.index()], PiSite::Site("C" | "N1" | "B" | "P1")))
    };
    let mut extra = Vec::new();
    for a in mol.atoms() {
        if sites[a.index()] != PiSite::None {
            continue;
        }
        let at = mol.atom(a);
        let (d, t) = multiple(mol, a);
        if d + t > 0 || at.charge != 0 || !anchor(&sites, a) {
            continue;
        }
        let deg = mol.degree(a) + at.hydrogens as usize;
        let kind = match (at.element, deg) {
            (7, 3) => Some("N2"),
            (8, 2) => Some("O2"),
            (16, 2) => Some("S2"),
            (34, 2) => Some("Se2"),
            (15, 3) => Some("P2"),
            (9, 1) => Some("F"),
            (17, 1) => Some("Cl"),
            _ => None,
        };
        if let Some(k) = kind {
            extra.push((a.index(), k));
        }
    }
    for (a, k) in extra {
        sites[a] = PiSite::Site(k);
    }
    let mut inductive = vec![Inductive::default(); n];
    for a in mol.atoms() {
        if !matches!(sites[a.index()], PiSite::Site("C")) {
            continue;
        }
        for (b, _) in mol.neighbours(a) {
            if is_sulfone(mol, b) {
                inductive[a.index()].sulfone = true;
            }
            if is_phosphine_oxide(mol, b) {
                inductive[a.index()].phosphine_oxide = true;
            }
        }
    }
    PiTyping { sites, inductive }
}

/// Atoms of elements no site type covers that sit in or on the π system (aromatic, or bonded to
/// a π site): metals, tellurium, arsenic... The model is not parameterised for them. Silicon,
/// bromine and iodine substituents are σ-only by design (no π orbital) and are not listed.
/// Returns (atom index, element symbol).
pub fn unparameterised(mol: &Molecule, typing: &PiTyping) -> Vec<(usize, &'static str)> {
    let mut out = Vec::new();
    for a in mol.atoms() {
        if typing.sites[a.index()] != PiSite::None {
            continue;
        }
        let at = mol.atom(a);
        if matches!(
            at.element,
            0 | 1 | 6 | 7 | 8 | 9 | 14 | 15 | 16 | 17 | 35 | 53 | 5 | 34
        ) {
            continue;
        }
        let touches_pi = mol
            .neighbours(a)
            .any(|(b, _)| typing.sites[b.index()] != PiSite::None);
        if at.aromatic || touches_pi {
            out.push((a.index(), at.symbol()));
        }
    }
    out
}
