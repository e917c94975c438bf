//! The periodic table as far as lumisift needs it: symbols for parsing, standard atomic weights,
//! monoisotopic masses, isotope masses and the default valences of the SMILES organic subset.
//!
//! Sources:
//! - Standard atomic weights: IUPAC/CIAAW "Standard atomic weights of the elements 2021", the
//!   abridged (conventional) values for calculation as tabulated in Prohaska et al., Pure Appl.
//!   Chem. 94, 573 (2022). The values for H, B, C, N, O, F, Si, P, S, Cl, Br are confirmed in
//!   `shared/science.md` h.2; the others are the abridged 2021 values quoted from memory of the
//!   same table.
//! - Isotope masses: Atomic Mass Evaluation AME2020 (Wang et al., Chin. Phys. C 45, 030003
//!   (2021)), as listed in the NIST "Atomic Weights and Isotopic Compositions" tables (quoted from
//!   memory; the monoisotopic masses of H, C, N, O, F, S, Cl, Br are checked against RDKit's exact
//!   masses in the fixture test).
//! - Default valences: the OpenSMILES specification, section 3.1.5 ("organic subset").

/// Atomic number 0 is the dummy atom `*` (attachment points, unknown atoms).
pub const DUMMY: u8 = 0;

/// Element symbols indexed by atomic number (index 0 is the dummy atom `*`).
pub const SYMBOLS: [&str; 119] = [
    "*", "H", "He", "Li", "Be", "B", "C", "N", "O", "F", "Ne", "Na", "Mg", "Al", "Si", "P", "S",
    "Cl", "Ar", "K", "Ca", "Sc", "Ti", "V", "Cr", "Mn", "Fe", "Co", "Ni", "Cu", "Zn", "Ga", "Ge",
    "As", "Se", "Br", "Kr", "Rb", "Sr", "Y", "Zr", "Nb", "Mo", "Tc", "Ru", "Rh", "Pd", "Ag", "Cd",
    "In", "Sn", "Sb", "Te", "I", "Xe", "Cs", "Ba", "La", "Ce", "Pr", "Nd", "Pm", "Sm", "Eu", "Gd",
    "Tb", "Dy", "Ho", "Er", "Tm", "Yb", "Lu", "Hf", "Ta", "W", "Re", "Os", "Ir", "Pt", "Au", "Hg",
    "Tl", "Pb", "Bi", "Po", "At", "Rn", "Fr", "Ra", "Ac", "Th", "Pa", "U", "Np", "Pu", "Am", "Cm",
    "Bk", "Cf", "Es", "Fm", "Md", "No", "Lr", "Rf", "Db", "Sg", "Bh", "Hs", "Mt", "Ds", "Rg", "Cn",
    "Nh", "Fl", "Mc", "Lv", "Ts", "Og",
];

/// Look up an element by its symbol (case-sensitive, as written in SMILES brackets).
pub fn from_symbol(sym: &str) -> Option<u8> {
    SYMBOLS.iter().position(|s| *s == sym).map(|z| z as u8)
}

/// The symbol of atomic number `z` (`*` for 0).
pub fn symbol(z: u8) -> &'static str {
    SYMBOLS.get(z as usize).copied().unwrap_or("*")
}

/// Element data: (Z, standard atomic weight, mass number of the most abundant isotope, its mass).
/// Only elements with a standard atomic weight listed here can be weighed; see [`ElementError`].
const DATA: &[(u8, f64, u16, f64)] = &[
    (1, 1.008, 1, 1.007_825_032_23),
    (2, 4.002_6, 4, 4.002_603_254_13),
    (3, 6.94, 7, 7.016_003_434),
    (4, 9.012_2, 9, 9.012_183_06),
    (5, 10.81, 11, 11.009_305_36),
    (6, 12.011, 12, 12.0),
    (7, 14.007, 14, 14.003_074_004_43),
    (8, 15.999, 16, 15.994_914_619_57),
    (9, 18.998, 19, 18.998_403_162_73),
    (10, 20.180, 20, 19.992_440_176_2),
    (11, 22.990, 23, 22.989_769_282),
    (12, 24.305, 24, 23.985_041_697),
    (13, 26.982, 27, 26.981_538_41),
    (14, 28.085, 28, 27.976_926_534_65),
    (15, 30.974, 31, 30.973_761_998_42),
    (16, 32.06, 32, 31.972_071_174_4),
    (17, 35.45, 35, 34.968_852_682),
    (18, 39.95, 40, 39.962_383_123_7),
    (19, 39.098, 39, 38.963_706_486_4),
    (20, 40.078, 40, 39.962_590_863),
    (26, 55.845, 56, 55.934_936_33),
    (29, 63.546, 63, 62.929_597_72),
    (30, 65.38, 64, 63.929_142_01),
    (31, 69.723, 69, 68.925_573_5),
    (32, 72.630, 74, 73.921_177_761),
    (33, 74.922, 75, 74.921_594_57),
    (34, 78.971, 80, 79.916_521_8),
    (35, 79.904, 79, 78.918_337_6),
    (36, 83.798, 84, 83.911_497_727_3),
    (46, 106.42, 106, 105.903_480_4),
    (47, 107.87, 107, 106.905_091_6),
    (50, 118.71, 120, 119.902_201_873),
    (51, 121.76, 121, 120.903_812),
    (52, 127.60, 130, 129.906_222_748),
    (53, 126.90, 127, 126.904_471_9),
    (54, 131.29, 132, 131.904_155_085_6),
    (77, 192.22, 193, 192.962_921_6),
    (78, 195.08, 195, 194.964_791_7),
    (79, 196.97, 197, 196.966_568_79),
];

/// Masses of further isotopes that occur in labelled emitters and their analysis (AME2020,
/// quoted from memory). (Z, mass number, atomic mass in u).
const ISOTOPES: &[(u8, u16, f64)] = &[
    (1, 2, 2.014_101_778_12),
    (1, 3, 3.016_049_277_9),
    (5, 10, 10.012_936_95),
    (6, 13, 13.003_354_835_07),
    (6, 14, 14.003_241_988_4),
    (7, 15, 15.000_108_898_88),
    (8, 17, 16.999_131_756_5),
    (8, 18, 17.999_159_612_86),
    (14, 29, 28.976_494_664_9),
    (14, 30, 29.973_770_136),
    (16, 33, 32.971_458_909_8),
    (16, 34, 33.967_867_004),
    (17, 37, 36.965_902_602),
    (35, 81, 80.916_289_7),
];

fn data(z: u8) -> Option<&'static (u8, f64, u16, f64)> {
    DATA.iter().find(|d| d.0 == z)
}

/// Standard atomic weight (g/mol) of element `z`, if tabulated.
pub fn standard_weight(z: u8) -> Option<f64> {
    data(z).map(|d| d.1)
}

/// Mass (u) of the most abundant isotope of `z` (what a monoisotopic mass is built from).
pub fn monoisotopic_mass(z: u8) -> Option<f64> {
    data(z).map(|d| d.3)
}

/// Mass (u) of isotope `a` of element `z`, if tabulated.
pub fn isotope_mass(z: u8, a: u16) -> Option<f64> {
    if let Some(d) = data(z)
        && d.2 == a
    {
        return Some(d.3);
    }
    ISOTOPES.iter().find(|i| i.0 == z && i.1 == a).map(|i| i.2)
}

/// Is `z` in the SMILES organic subset (may be written without brackets)?
pub fn is_organic_subset(z: u8) -> bool {
    matches!(z, 5 | 6 | 7 | 8 | 9 | 15 | 16 | 17 | 35 | 53)
}

/// Default valences of the organic subset (OpenSMILES 3.1.5), lowest first.
pub fn default_valences(z: u8) -> &'static [u8] {
    match z {
        5 => &[3],
        6 => &[4],
        7 | 15 => &[3, 5],
        8 => &[2],
        16 => &[2, 4, 6],
        9 | 17 | 35 | 53 => &[1],
        _ => &[],
    }
}

/// Allowed total valences (sum of bond orders plus hydrogens) for element `z` with formal charge
/// `charge`, used for the valence check. Charged p-block atoms are treated like the isoelectronic
/// neutral element of the same period (N⁺ like C, O⁻ like F, B⁻ like C, S⁺ like P), the usual
/// convention of cheminformatics toolkits. Returns `None` where no check applies (metals, noble
/// gases, dummy atoms).
pub fn allowed_valences(z: u8, charge: i8) -> Option<&'static [u8]> {
    let eff = z as i16 - charge as i16;
    // Stay within the same p-block period for the isoelectronic substitution.
    let period = |n: i16| match n {
        1..=2 => 1,
        3..=10 => 2,
        11..=18 => 3,
        19..=36 => 4,
        37..=54 => 5,
        _ => 6,
    };
    if eff < 1 || period(eff) != period(z as i16) {
        return None;
    }
    Some(match eff {
        1 => &[1],
        4 | 12 => &[2],
        5 | 13 => &[3],
        6 | 14 | 32 => &[4],
        7 => &[3, 5],
        15 | 33 => &[3, 5],
        8 => &[2],
        16 | 34 | 52 => &[2, 4, 6],
        9 => &[1],
        17 | 35 | 53 => &[1, 3, 5, 7],
        _ => return None,
    })
}

/// Outer p-block elements that may be written as aromatic lowercase symbols in brackets
/// (OpenSMILES: b c n o p s se as te; we also accept si and ge for siloles and germoles).
pub fn may_be_aromatic(z: u8) -> bool {
    matches!(z, 5 | 6 | 7 | 8 | 14 | 15 | 16 | 32 | 33 | 34 | 52)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn symbols_round_trip() {
        for z in 0..=118u8 {
            assert_eq!(from_symbol(symbol(z)), Some(z));
        }
        assert_eq!(from_symbol("Xx"), None);
    }

    #[test]
    fn isoelectronic_valences() {
        assert_eq!(allowed_valences(7, 1), Some(&[4u8][..]));
        assert_eq!(allowed_valences(8, -1), Some(&[1u8][..]));
        assert_eq!(allowed_valences(5, -1), Some(&[4u8][..]));
        assert_eq!(allowed_valences(26, 0), None);
    }
}
