//! Idealised bond lengths (Å) by element pair and bond kind.
//!
//! Typical values from the survey of X-ray and neutron structures by Allen, Kennard, Watson,
//! Brammer, Orpen & Taylor, J. Chem. Soc., Perkin Trans. 2, S1–S19 (1987) (values quoted from
//! memory, rounded to 0.01 Å): C–C aromatic 1.39–1.40, Car–Car biaryl 1.49, Csp3–Csp3 1.53,
//! C=C 1.34, C≡C 1.20, C≡N 1.14–1.16, C=O 1.21–1.23, Car–N(amine) 1.42, Car–O 1.36, C–S 1.77,
//! Car–B 1.57, C–H 1.08 (aromatic; 1.09 sp3), N–H 1.01, O–H 0.97.

use crate::chem::{Bond, BondOrder};

/// Ideal length (Å) of a bond of `kind` between elements `a` and `b`; aromatic bonds use the
/// ring value. Unlisted pairs fall back to the sum of covalent radii (Cordero et al., Dalton
/// Trans. 2008, 2832; from memory).
pub fn ideal_length(a: u8, b: u8, bond: &Bond, a_aromatic: bool, b_aromatic: bool) -> f64 {
    let (x, y) = if a <= b { (a, b) } else { (b, a) };
    if bond.aromatic {
        return match (x, y) {
            (6, 6) => 1.40,
            (6, 7) | (7, 7) => 1.36,
            (6, 8) => 1.37,
            (6, 16) => 1.72,
            (6, 34) => 1.87,
            (5, _) => 1.50,
            _ => radius(x) + radius(y) - 0.1,
        };
    }
    match (bond.order, x, y) {
        (BondOrder::Single, 1, 6) => 1.08,
        (BondOrder::Single, 1, 7) => 1.01,
        (BondOrder::Single, 1, 8) => 0.97,
        (BondOrder::Single, 1, _) => radius(y) + 0.31,
        (BondOrder::Single, 6, 6) => {
            if a_aromatic && b_aromatic {
                1.49
            } else if a_aromatic || b_aromatic {
                1.51
            } else {
                1.53
            }
        }
        (BondOrder::Single, 6, 7) => 1.42,
        (BondOrder::Single, 6, 8) => 1.36,
        (BondOrder::Single, 6, 16) => 1.77,
        (BondOrder::Single, 5, 6) => 1.57,
        (BondOrder::Single, 6, 9) => 1.35,
        (BondOrder::Single, 6, 17) => 1.74,
        (BondOrder::Single, 6, 35) => 1.90,
        (BondOrder::Single, 6, 14) => 1.87,
        (BondOrder::Single, 6, 15) => 1.80,
        (BondOrder::Double, 6, 6) => 1.34,
        (BondOrder::Double, 6, 7) => 1.29,
        (BondOrder::Double, 6, 8) => 1.22,
        (BondOrder::Double, 8, 16) => 1.44,
        (BondOrder::Double, 8, 15) => 1.49,
        (BondOrder::Triple, 6, 6) => 1.20,
        (BondOrder::Triple, 6, 7) => 1.15,
        (o, _, _) => {
            let s = radius(x) + radius(y);
            match o {
                BondOrder::Single => s,
                BondOrder::Double => s - 0.15,
                _ => s - 0.25,
            }
        }
    }
}

/// Single-bond covalent radii (Å), Cordero et al. 2008 (from memory).
fn radius(z: u8) -> f64 {
    match z {
        1 => 0.31,
        5 => 0.84,
        6 => 0.76,
        7 => 0.71,
        8 => 0.66,
        9 => 0.57,
        14 => 1.11,
        15 => 1.07,
        16 => 1.05,
        17 => 1.02,
        34 => 1.20,
        35 => 1.20,
        53 => 1.39,
        _ => 1.40,
    }
}
