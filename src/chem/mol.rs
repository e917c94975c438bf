//! The molecule graph every stage passes around.
//!
//! A [`Molecule`] is an undirected petgraph graph of [`Atom`]s joined by [`Bond`]s. Hydrogens are
//! normally implicit (a count on each heavy atom); isotopic, charged or otherwise special hydrogens
//! stay explicit atoms. Bonds are stored in a Kekulé form (single, double, triple) together with an
//! aromatic flag from aromaticity perception, so that every algorithm can use either view.
//!
//! Index rule: atoms and bonds are never removed from a built molecule, so `AtomIdx` values stay
//! valid for its lifetime (removal happens only while building, see `smiles::parse`).

use petgraph::graph::{EdgeIndex, NodeIndex, UnGraph};
use petgraph::visit::EdgeRef;

use super::element;

/// Index of an atom in a [`Molecule`].
pub type AtomIdx = NodeIndex<u32>;
/// Index of a bond in a [`Molecule`].
pub type BondIdx = EdgeIndex<u32>;

/// Tetrahedral chirality as written in SMILES, relative to [`Atom::stereo_refs`] order.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Chirality {
    /// `@`: looking from the first neighbour, the others run anticlockwise.
    AntiClockwise,
    /// `@@`: looking from the first neighbour, the others run clockwise.
    Clockwise,
}

impl Chirality {
    pub fn inverted(self) -> Self {
        match self {
            Chirality::AntiClockwise => Chirality::Clockwise,
            Chirality::Clockwise => Chirality::AntiClockwise,
        }
    }
}

/// A neighbour in the reference order of a stereocentre: an atom, or the implicit hydrogen.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StereoRef {
    Atom(AtomIdx),
    ImplicitH,
}

/// An atom.
#[derive(Debug, Clone, PartialEq)]
pub struct Atom {
    /// Atomic number; 0 is the dummy atom `*`.
    pub element: u8,
    /// Mass number, 0 when unspecified (natural abundance).
    pub isotope: u16,
    pub charge: i8,
    /// Number of implicit hydrogens (explicit hydrogen atoms are graph neighbours instead).
    pub hydrogens: u8,
    /// Set by aromaticity perception (or by the SMILES reader before kekulisation).
    pub aromatic: bool,
    /// Atom class (`[*:1]` has class 1); 0 when none. Marks attachment points in fragments.
    pub class: u32,
    /// Tetrahedral mark with its reference neighbour order, when given.
    pub chirality: Option<Chirality>,
    pub stereo_refs: Vec<StereoRef>,
}

impl Atom {
    pub fn new(element: u8) -> Self {
        Atom {
            element,
            isotope: 0,
            charge: 0,
            hydrogens: 0,
            aromatic: false,
            class: 0,
            chirality: None,
            stereo_refs: Vec::new(),
        }
    }

    pub fn symbol(&self) -> &'static str {
        element::symbol(self.element)
    }

    pub fn is_dummy(&self) -> bool {
        self.element == element::DUMMY
    }
}

/// Bond order in the Kekulé form.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum BondOrder {
    Single = 1,
    Double = 2,
    Triple = 3,
    Quadruple = 4,
}

impl BondOrder {
    pub fn valence(self) -> u8 {
        self as u8
    }
}

/// Configuration of a double bond: neighbour `a` of the bond's first endpoint (petgraph
/// `source`) and neighbour `b` of its second endpoint lie on opposite sides (`trans`) or on the
/// same side. Resolved by the reader from `/` and `\` marks; written back by the canonical writer.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct DoubleBondStereo {
    pub a: AtomIdx,
    pub b: AtomIdx,
    pub trans: bool,
}

/// A bond.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Bond {
    pub order: BondOrder,
    /// Set by aromaticity perception.
    pub aromatic: bool,
    /// Cis/trans configuration of a double bond, when the input gave one.
    pub stereo: Option<DoubleBondStereo>,
}

impl Bond {
    pub fn new(order: BondOrder) -> Self {
        Bond {
            order,
            aromatic: false,
            stereo: None,
        }
    }

    /// A small code that distinguishes the bond kinds a chemist would: aromatic bonds are one kind
    /// whatever their Kekulé order.
    pub fn kind_code(&self) -> u8 {
        if self.aromatic { 5 } else { self.order as u8 }
    }
}

/// A molecule (possibly several disconnected components).
#[derive(Debug, Clone, Default)]
pub struct Molecule {
    pub graph: UnGraph<Atom, Bond, u32>,
}

impl Molecule {
    pub fn new() -> Self {
        Molecule {
            graph: UnGraph::default(),
        }
    }

    pub fn atom_count(&self) -> usize {
        self.graph.node_count()
    }

    pub fn bond_count(&self) -> usize {
        self.graph.edge_count()
    }

    pub fn atom(&self, a: AtomIdx) -> &Atom {
        &self.graph[a]
    }

    pub fn atom_mut(&mut self, a: AtomIdx) -> &mut Atom {
        &mut self.graph[a]
    }

    pub fn bond(&self, b: BondIdx) -> &Bond {
        &self.graph[b]
    }

    pub fn atoms(&self) -> impl Iterator<Item = AtomIdx> + '_ {
        self.graph.node_indices()
    }

    pub fn add_atom(&mut self, atom: Atom) -> AtomIdx {
        self.graph.add_node(atom)
    }

    pub fn add_bond(&mut self, a: AtomIdx, b: AtomIdx, bond: Bond) -> BondIdx {
        self.graph.add_edge(a, b, bond)
    }

    pub fn bond_between(&self, a: AtomIdx, b: AtomIdx) -> Option<BondIdx> {
        self.graph.find_edge(a, b)
    }

    /// Neighbours of `a` with the connecting bond.
    pub fn neighbours(&self, a: AtomIdx) -> impl Iterator<Item = (AtomIdx, BondIdx)> + '_ {
        self.graph.edges(a).map(move |e| {
            let other = if e.source() == a {
                e.target()
            } else {
                e.source()
            };
            (other, e.id())
        })
    }

    /// Number of explicit neighbours.
    pub fn degree(&self, a: AtomIdx) -> usize {
        self.graph.edges(a).count()
    }

    /// Number of neighbours that are not hydrogen atoms.
    pub fn heavy_degree(&self, a: AtomIdx) -> usize {
        self.neighbours(a)
            .filter(|(n, _)| self.graph[*n].element != 1)
            .count()
    }

    /// Sum of Kekulé bond orders at `a` (explicit bonds only).
    pub fn bond_order_sum(&self, a: AtomIdx) -> u32 {
        self.graph
            .edges(a)
            .map(|e| e.weight().order.valence() as u32)
            .sum()
    }

    /// Implicit plus explicit hydrogens on `a`.
    pub fn total_hydrogens(&self, a: AtomIdx) -> u32 {
        self.graph[a].hydrogens as u32
            + self
                .neighbours(a)
                .filter(|(n, _)| self.graph[*n].element == 1)
                .count() as u32
    }

    /// Total valence: bond orders plus implicit hydrogens.
    pub fn valence(&self, a: AtomIdx) -> u32 {
        self.bond_order_sum(a) + self.graph[a].hydrogens as u32
    }

    /// Net formal charge.
    pub fn formal_charge(&self) -> i32 {
        self.graph.node_weights().map(|a| a.charge as i32).sum()
    }

    /// Number of connected components.
    pub fn component_count(&self) -> usize {
        petgraph::algo::connected_components(&self.graph)
    }
}
