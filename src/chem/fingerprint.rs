//! Circular (extended-connectivity) fingerprints and Tanimoto similarity.
//!
//! Method after Rogers & Hahn, "Extended-Connectivity Fingerprints", J. Chem. Inf. Model. 50,
//! 742–754 (2010): each heavy atom starts with an identifier hashed from its invariants (atomic
//! number, heavy-atom degree, total hydrogens, formal charge, isotope, ring membership,
//! aromaticity); at each iteration up to `radius` the identifier is re-hashed with the sorted
//! (bond kind, neighbour identifier) pairs. All identifiers of all iterations are folded into
//! `n_bits` by modulo. Simplification against the paper: structurally duplicate environments are
//! not removed, which only sets the same bit twice.
//!
//! The hash is a fixed 64-bit mix (the SplitMix64 finaliser, Steele et al., OOPSLA 2014), so bit
//! positions are identical on every platform and release; they are not comparable with other
//! tools' ECFP bits.

use super::mol::Molecule;
use super::rings;

/// Fingerprint settings.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FingerprintParams {
    /// Number of iterations (2 gives the common "ECFP4" diameter-4 environments).
    pub radius: u32,
    /// Folded length in bits (a multiple of 64).
    pub n_bits: usize,
}

impl Default for FingerprintParams {
    fn default() -> Self {
        FingerprintParams {
            radius: 2,
            n_bits: 2048,
        }
    }
}

/// A folded bit fingerprint.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Fingerprint {
    pub words: Vec<u64>,
}

impl Fingerprint {
    pub fn count_ones(&self) -> u32 {
        self.words.iter().map(|w| w.count_ones()).sum()
    }

    pub fn n_bits(&self) -> usize {
        self.words.len() * 64
    }

    pub fn get(&self, bit: usize) -> bool {
        self.words[bit / 64] >> (bit % 64) & 1 == 1
    }
}

fn mix(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9e37_79b9_7f4a_7c15);
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

fn combine(h: u64, v: u64) -> u64 {
    mix(h ^ v.wrapping_mul(0x9e37_79b9_7f4a_7c15).rotate_left(17))
}

/// Circular fingerprint of `mol`.
///
/// # Panics
/// If `params.n_bits` is zero or not a multiple of 64 (a caller bug).
pub fn circular_fingerprint(mol: &Molecule, params: FingerprintParams) -> Fingerprint {
    assert!(
        params.n_bits > 0 && params.n_bits.is_multiple_of(64),
        "n_bits must be a positive multiple of 64"
    );
    let n = mol.atom_count();
    let mut words = vec![0u64; params.n_bits / 64];
    let mut set = |id: u64| {
        let bit = (id % params.n_bits as u64) as usize;
        words[bit / 64] |= 1 << (bit % 64);
    };
    let ring_bond = rings::ring_bonds(mol);
    let ring_atom = rings::ring_atoms(mol, &ring_bond);
    let heavy: Vec<bool> = mol.graph.node_weights().map(|a| a.element != 1).collect();
    let mut ids: Vec<u64> = mol
        .atoms()
        .map(|a| {
            let at = mol.atom(a);
            let mut h = mix(at.element as u64);
            h = combine(h, mol.heavy_degree(a) as u64);
            h = combine(h, mol.total_hydrogens(a) as u64);
            h = combine(h, (at.charge as i64 + 128) as u64);
            h = combine(h, at.isotope as u64);
            h = combine(h, ring_atom[a.index()] as u64);
            combine(h, at.aromatic as u64)
        })
        .collect();
    for (i, &id) in ids.iter().enumerate() {
        if heavy[i] {
            set(id);
        }
    }
    let mut next = vec![0u64; n];
    let mut env: Vec<(u8, u64)> = Vec::new();
    for iter in 1..=params.radius {
        for a in mol.atoms() {
            let i = a.index();
            if !heavy[i] {
                continue;
            }
            env.clear();
            for (b, e) in mol.neighbours(a) {
                if heavy[b.index()] {
                    env.push((mol.bond(e).kind_code(), ids[b.index()]));
                }
            }
            env.sort_unstable();
            let mut h = combine(mix(iter as u64), ids[i]);
            for &(k, id) in &env {
                h = combine(combine(h, k as u64), id);
            }
            next[i] = h;
            set(h);
        }
        std::mem::swap(&mut ids, &mut next);
    }
    Fingerprint { words }
}

/// Tanimoto (Jaccard) similarity c / (a + b − c) of two fingerprints of equal length; 1.0 for
/// two empty fingerprints.
pub fn tanimoto(x: &Fingerprint, y: &Fingerprint) -> f64 {
    assert_eq!(x.words.len(), y.words.len(), "fingerprint lengths differ");
    let mut both = 0u32;
    let mut any = 0u32;
    for (a, b) in x.words.iter().zip(&y.words) {
        both += (a & b).count_ones();
        any += (a | b).count_ones();
    }
    if any == 0 {
        1.0
    } else {
        both as f64 / any as f64
    }
}
