//! SMILES reader (OpenSMILES, as emitter chemistry uses it).
//!
//! Reads the organic subset and bracket atoms (isotope, chirality, hydrogen count, charge, atom
//! class), aromatic lowercase atoms, ring closures `1`–`9` and `%nn`, branches, `.` components
//! and the bond symbols `- = # $ : / \`. Implicit hydrogens follow the OpenSMILES default valences.
//! Plain explicit hydrogens (`[H]` without isotope, charge or class, bonded to one heavy atom) are
//! folded into their neighbour's hydrogen count. Aromatic input is kekulised, the valence of every
//! atom is checked, and aromaticity is perceived anew (see [`crate::chem::aromaticity`]), so two
//! spellings of one molecule give the same graph.
//!
//! Reference: OpenSMILES specification, version 1.0 (opensmiles.org), sections 3.1–3.5.
//!
//! Complexity: O(n) for reading plus kekulisation and aromaticity (near linear for organic
//! molecules).

use crate::chem::element;
use crate::chem::error::{SmilesError, SmilesErrorKind as K};
use crate::chem::mol::{
    Atom, AtomIdx, Bond, BondOrder, Chirality, DoubleBondStereo, Molecule, StereoRef,
};
use crate::chem::{aromaticity, kekulize, rings};

/// Bond as written.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum RawBondKind {
    Single,
    Double,
    Triple,
    Quadruple,
    Aromatic,
    Up,
    Down,
    /// No symbol: single, or aromatic between two aromatic atoms.
    Implicit,
}

#[derive(Debug, Clone)]
struct RawAtom {
    atom: Atom,
    pos: usize,
    bracket: bool,
    /// Reference order of a stereocentre as raw indices (usize::MAX = implicit H; unfilled ring
    /// closures are patched when the ring closes).
    refs: Vec<usize>,
}

#[derive(Debug, Clone, Copy)]
struct RawBond {
    a: usize,
    b: usize,
    kind: RawBondKind,
}

struct RingOpen {
    atom: usize,
    bond: Option<(RawBondKind, char)>,
    pos: usize,
    /// Index into the opener's `refs` to fill with the closing atom.
    ref_slot: Option<usize>,
}

const IMPLICIT_H_REF: usize = usize::MAX;
const UNFILLED_REF: usize = usize::MAX - 1;

/// Parse a SMILES string into a normalised molecule (kekulised, aromaticity perceived, valences
/// checked, plain explicit hydrogens folded).
///
/// # Errors
/// A [`SmilesError`] with the 0-based character position and the kind of problem.
///
/// # Example
/// ```
/// let mol = lumisift::chem::parse_smiles("c1ccc2c(c1)[nH]c1ccccc12").unwrap(); // carbazole
/// assert_eq!(mol.atom_count(), 13);
/// ```
pub fn parse_smiles(s: &str) -> Result<Molecule, SmilesError> {
    let mut p = Parser::new(s);
    p.run()?;
    p.finish()
}

struct Parser<'a> {
    src: &'a str,
    bytes: &'a [u8],
    i: usize,
    atoms: Vec<RawAtom>,
    bonds: Vec<RawBond>,
    prev: Option<usize>,
    pending: Option<(RawBondKind, char, usize)>,
    branches: Vec<(usize, usize)>,
    /// Open ring bonds by number (few at a time, so a short list beats a 100-slot table).
    rings: Vec<(usize, RingOpen)>,
    /// Position of a '.' not yet followed by an atom.
    open_dot: Option<usize>,
}

impl<'a> Parser<'a> {
    fn new(src: &'a str) -> Self {
        Parser {
            src,
            bytes: src.as_bytes(),
            i: 0,
            atoms: Vec::with_capacity(src.len()),
            bonds: Vec::with_capacity(src.len() + 8),
            prev: None,
            pending: None,
            branches: Vec::new(),
            rings: Vec::new(),
            open_dot: None,
        }
    }

    /// Character position (0-based) of byte offset `b`.
    fn col(&self, b: usize) -> usize {
        if self.src.is_ascii() {
            b
        } else {
            self.src[..b.min(self.src.len())].chars().count()
        }
    }

    fn err(&self, byte_pos: usize, kind: K) -> SmilesError {
        SmilesError::new(self.col(byte_pos), kind)
    }

    fn peek(&self) -> Option<u8> {
        self.bytes.get(self.i).copied()
    }

    fn run(&mut self) -> Result<(), SmilesError> {
        if self.bytes.iter().all(|b| b.is_ascii_whitespace()) {
            return Err(self.err(0, K::Empty));
        }
        while let Some(c) = self.peek() {
            let start = self.i;
            match c {
                b'(' => {
                    let Some(prev) = self.prev else {
                        return Err(self.err(start, K::NothingToBond));
                    };
                    if let Some((_, sym, pos)) = self.pending {
                        return Err(self.err(pos, K::DanglingBond(sym)));
                    }
                    if self.bytes.get(start + 1) == Some(&b')') {
                        return Err(self.err(start, K::EmptyBranch));
                    }
                    self.branches.push((prev, start));
                    self.i += 1;
                }
                b')' => {
                    if let Some((_, sym, pos)) = self.pending {
                        return Err(self.err(pos, K::DanglingBond(sym)));
                    }
                    let Some((atom, _)) = self.branches.pop() else {
                        return Err(self.err(start, K::UnmatchedClose));
                    };
                    self.prev = Some(atom);
                    self.i += 1;
                }
                b'-' | b'=' | b'#' | b'$' | b':' | b'/' | b'\\' => {
                    if self.prev.is_none() {
                        return Err(self.err(start, K::NothingToBond));
                    }
                    if let Some((_, sym, _)) = self.pending {
                        let _ = sym;
                        return Err(self.err(start, K::UnexpectedChar(c as char)));
                    }
                    self.pending = Some((bond_kind(c), c as char, start));
                    self.i += 1;
                }
                b'.' => {
                    if let Some((_, sym, pos)) = self.pending {
                        return Err(self.err(pos, K::DanglingBond(sym)));
                    }
                    if self.prev.is_none() {
                        return Err(self.err(start, K::UnexpectedChar('.')));
                    }
                    self.prev = None;
                    self.open_dot = Some(start);
                    self.i += 1;
                }
                b'0'..=b'9' | b'%' => self.ring_closure()?,
                b'[' => {
                    let atom = self.bracket_atom()?;
                    self.add_atom(atom, start, true)?;
                }
                b'*' => {
                    self.i += 1;
                    self.add_atom(Atom::new(element::DUMMY), start, false)?;
                }
                _ if c.is_ascii_alphabetic() => {
                    let atom = self.organic_atom()?;
                    self.add_atom(atom, start, false)?;
                }
                _ if c.is_ascii_whitespace() => {
                    // Anything after whitespace is a title/comment in SMILES files; callers split
                    // columns themselves, so trailing text here is an error unless it is blank.
                    if self.bytes[start..].iter().all(|b| b.is_ascii_whitespace()) {
                        self.i = self.bytes.len();
                    } else {
                        return Err(self.err(start, K::UnexpectedChar(c as char)));
                    }
                }
                _ => {
                    let ch = self.src[start..].chars().next().unwrap_or('?');
                    return Err(self.err(start, K::UnexpectedChar(ch)));
                }
            }
        }
        if let Some((_, sym, pos)) = self.pending {
            return Err(self.err(pos, K::DanglingBond(sym)));
        }
        if let Some(pos) = self.open_dot {
            return Err(self.err(pos, K::DanglingBond('.')));
        }
        if let Some((_, pos)) = self.branches.last() {
            return Err(self.err(*pos, K::UnclosedBranch));
        }
        if let Some((n, r)) = self.rings.iter().min_by_key(|(_, r)| r.pos) {
            return Err(self.err(r.pos, K::UnclosedRing(*n as u32)));
        }
        Ok(())
    }

    fn add_atom(&mut self, mut atom: Atom, pos: usize, bracket: bool) -> Result<(), SmilesError> {
        let idx = self.atoms.len();
        self.open_dot = None;
        let mut refs = Vec::new();
        if atom.chirality.is_some() {
            if let Some(p) = self.prev {
                refs.push(p);
            }
            if atom.hydrogens > 0 {
                refs.push(IMPLICIT_H_REF);
            }
        }
        atom.stereo_refs.clear();
        self.atoms.push(RawAtom {
            atom,
            pos,
            bracket,
            refs,
        });
        if let Some(p) = self.prev {
            let kind = self
                .pending
                .take()
                .map(|(k, _, _)| k)
                .unwrap_or(RawBondKind::Implicit);
            self.bonds.push(RawBond { a: p, b: idx, kind });
            if self.atoms[p].atom.chirality.is_some() {
                self.atoms[p].refs.push(idx);
            }
        }
        self.prev = Some(idx);
        Ok(())
    }

    fn ring_closure(&mut self) -> Result<(), SmilesError> {
        let start = self.i;
        let n: usize = if self.bytes[start] == b'%' {
            let d = self.bytes.get(start + 1..start + 3);
            match d {
                Some([a, b]) if a.is_ascii_digit() && b.is_ascii_digit() => {
                    self.i += 3;
                    ((a - b'0') * 10 + (b - b'0')) as usize
                }
                _ => return Err(self.err(start, K::BadRingNumber)),
            }
        } else {
            self.i += 1;
            (self.bytes[start] - b'0') as usize
        };
        let Some(cur) = self.prev else {
            return Err(self.err(start, K::NothingToBond));
        };
        let bond = self.pending.take().map(|(k, c, _)| (k, c));
        let open = self
            .rings
            .iter()
            .position(|(k, _)| *k == n)
            .map(|i| self.rings.swap_remove(i).1);
        match open {
            None => {
                let ref_slot = if self.atoms[cur].atom.chirality.is_some() {
                    self.atoms[cur].refs.push(UNFILLED_REF);
                    Some(self.atoms[cur].refs.len() - 1)
                } else {
                    None
                };
                self.rings.push((
                    n,
                    RingOpen {
                        atom: cur,
                        bond,
                        pos: start,
                        ref_slot,
                    },
                ));
            }
            Some(open) => {
                if open.atom == cur {
                    return Err(self.err(start, K::RingToSelf(n as u32)));
                }
                let (a, b) = (open.atom, cur);
                if self
                    .bonds
                    .iter()
                    .any(|x| (x.a == a && x.b == b) || (x.a == b && x.b == a))
                {
                    return Err(self.err(start, K::DuplicateBond(n as u32)));
                }
                // The symbol at the opening digit reads opener→closer; the one at the closing
                // digit reads closer→opener, so directional marks there are reversed.
                let kind = match (open.bond, bond) {
                    (None, None) => RawBondKind::Implicit,
                    (Some((k, _)), None) => k,
                    (None, Some((k, _))) => flip(k),
                    (Some((k1, _)), Some((k2, _))) => {
                        if k1 == flip(k2) {
                            k1
                        } else {
                            return Err(self.err(start, K::ConflictingRingBond(n as u32)));
                        }
                    }
                };
                self.bonds.push(RawBond { a, b, kind });
                if let Some(slot) = open.ref_slot {
                    self.atoms[a].refs[slot] = b;
                }
                if self.atoms[b].atom.chirality.is_some() {
                    self.atoms[b].refs.push(a);
                }
            }
        }
        Ok(())
    }

    fn organic_atom(&mut self) -> Result<Atom, SmilesError> {
        let start = self.i;
        let c = self.bytes[start];
        let next = self.bytes.get(start + 1).copied();
        // A two-letter element outside the organic subset (Na, Fe, Si, Se, Cu...) needs
        // brackets. A second letter that is an aromatic organic atom (Sc = S then c, Cn, Co,
        // Os, Pb...) is read as two atoms, as SMILES requires.
        if let Some(n2) = next
            && c.is_ascii_uppercase()
            && n2.is_ascii_lowercase()
            && !matches!(n2, b'b' | b'c' | b'n' | b'o' | b'p' | b's')
            && !matches!((c, n2), (b'C', b'l') | (b'B', b'r'))
            && let Some(two) = self.src.get(start..start + 2)
            && element::from_symbol(two).is_some()
        {
            return Err(self.err(start, K::NeedsBrackets(two.to_string())));
        }
        let (z, aromatic, len) = match (c, next) {
            (b'C', Some(b'l')) => (17, false, 2),
            (b'B', Some(b'r')) => (35, false, 2),
            (b'B', _) => (5, false, 1),
            (b'C', _) => (6, false, 1),
            (b'N', _) => (7, false, 1),
            (b'O', _) => (8, false, 1),
            (b'P', _) => (15, false, 1),
            (b'S', _) => (16, false, 1),
            (b'F', _) => (9, false, 1),
            (b'I', _) => (53, false, 1),
            (b'b', _) => (5, true, 1),
            (b'c', _) => (6, true, 1),
            (b'n', _) => (7, true, 1),
            (b'o', _) => (8, true, 1),
            (b'p', _) => (15, true, 1),
            (b's', Some(b'e')) => {
                return Err(self.err(start, K::NeedsBrackets("se".into())));
            }
            (b's', _) => (16, true, 1),
            _ => {
                // An element outside the organic subset, or a letter that is no element.
                let two = self.src.get(start..start + 2).unwrap_or("");
                let one = self.src.get(start..start + 1).unwrap_or("");
                if (two.len() == 2
                    && two.as_bytes()[1].is_ascii_lowercase()
                    && element::from_symbol(two).is_some())
                    || element::from_symbol(one).is_some()
                {
                    let sym = if element::from_symbol(two).is_some() {
                        two
                    } else {
                        one
                    };
                    return Err(self.err(start, K::NeedsBrackets(sym.to_string())));
                }
                return Err(self.err(start, K::UnknownElement(one.to_string())));
            }
        };
        self.i += len;
        let mut atom = Atom::new(z);
        atom.aromatic = aromatic;
        Ok(atom)
    }

    fn bracket_atom(&mut self) -> Result<Atom, SmilesError> {
        let open = self.i;
        let Some(close_rel) = self.bytes[open..].iter().position(|&b| b == b']') else {
            return Err(self.err(open, K::UnclosedBracket));
        };
        let close = open + close_rel;
        let body = &self.bytes[open + 1..close];
        let mut j = 0usize;
        let at = |j: usize| open + 1 + j;
        // isotope
        let mut isotope: u32 = 0;
        let iso_start = j;
        while j < body.len() && body[j].is_ascii_digit() {
            isotope = isotope * 10 + (body[j] - b'0') as u32;
            if isotope > 999 {
                return Err(self.err(at(iso_start), K::BadBracket("isotope too large".into())));
            }
            j += 1;
        }
        // symbol
        if j >= body.len() {
            return Err(self.err(at(j), K::BadBracket("missing element symbol".into())));
        }
        let sym_start = j;
        let (z, aromatic) = if body[j] == b'*' {
            j += 1;
            (element::DUMMY, false)
        } else if body[j].is_ascii_lowercase() {
            let two = std::str::from_utf8(&body[j..(j + 2).min(body.len())]).unwrap_or("");
            let arom2 = ["se", "as", "te", "si", "ge"];
            // A lowercase two-letter element that cannot be aromatic ([cl], [br], [na], [he]);
            // a second letter that could start something else is left to the checks below.
            let cap2 = {
                let mut t = two.to_string();
                let first = t.len().min(1);
                t[..first].make_ascii_uppercase();
                t
            };
            if two.len() == 2
                && two.as_bytes()[1].is_ascii_lowercase()
                && !arom2.contains(&two)
                && element::from_symbol(&cap2).is_some()
            {
                return Err(self.err(at(sym_start), K::NotAromaticElement(two.to_string())));
            }
            if two.len() == 2 && arom2.contains(&two) {
                j += 2;
                let mut s = two.to_string();
                s[..1].make_ascii_uppercase();
                (element::from_symbol(&s).unwrap_or(0), true)
            } else {
                let c = body[j];
                j += 1;
                match c {
                    b'b' => (5, true),
                    b'c' => (6, true),
                    b'n' => (7, true),
                    b'o' => (8, true),
                    b'p' => (15, true),
                    b's' => (16, true),
                    _ => {
                        let s = (c as char).to_string();
                        let mut up = s.clone();
                        up.make_ascii_uppercase();
                        return Err(self.err(
                            at(sym_start),
                            if element::from_symbol(&up).is_some() {
                                K::NotAromaticElement(s)
                            } else {
                                K::UnknownElement(s)
                            },
                        ));
                    }
                }
            }
        } else if body[j].is_ascii_uppercase() {
            let one = std::str::from_utf8(&body[j..j + 1]).unwrap_or("");
            let two = if j + 1 < body.len() && body[j + 1].is_ascii_lowercase() {
                std::str::from_utf8(&body[j..j + 2]).ok()
            } else {
                None
            };
            if let Some(z) = two.and_then(element::from_symbol) {
                j += 2;
                (z, false)
            } else if let Some(z) = element::from_symbol(one) {
                j += 1;
                (z, false)
            } else {
                let shown = two.unwrap_or(one).to_string();
                return Err(self.err(at(sym_start), K::UnknownElement(shown)));
            }
        } else {
            return Err(self.err(
                at(j),
                K::BadBracket(format!(
                    "expected an element symbol, found '{}'",
                    char_at(self.src, at(j))
                )),
            ));
        };
        if aromatic && !element::may_be_aromatic(z) {
            return Err(self.err(
                at(sym_start),
                K::NotAromaticElement(element::symbol(z).to_lowercase()),
            ));
        }
        let mut atom = Atom::new(z);
        atom.aromatic = aromatic;
        atom.isotope = isotope as u16;
        // chirality
        if j < body.len() && body[j] == b'@' {
            let cstart = j;
            j += 1;
            if j < body.len() && body[j] == b'@' {
                j += 1;
                atom.chirality = Some(Chirality::Clockwise);
            } else if body[j..].starts_with(b"TH1") {
                j += 3;
                atom.chirality = Some(Chirality::AntiClockwise);
            } else if body[j..].starts_with(b"TH2") {
                j += 3;
                atom.chirality = Some(Chirality::Clockwise);
            } else if j + 1 < body.len()
                && body[j].is_ascii_uppercase()
                && body[j + 1].is_ascii_uppercase()
            {
                let mut k = j + 2;
                while k < body.len() && body[k].is_ascii_digit() {
                    k += 1;
                }
                let s = String::from_utf8_lossy(&body[cstart..k]).to_string();
                return Err(self.err(at(cstart), K::UnsupportedChirality(s)));
            } else {
                atom.chirality = Some(Chirality::AntiClockwise);
            }
        }
        // hydrogen count
        if j < body.len() && body[j] == b'H' {
            j += 1;
            let mut h = 1u32;
            if j < body.len() && body[j].is_ascii_digit() {
                h = (body[j] - b'0') as u32;
                j += 1;
                if j < body.len() && body[j].is_ascii_digit() {
                    return Err(self.err(at(j), K::BadBracket("hydrogen count above 9".into())));
                }
            }
            atom.hydrogens = h as u8;
        }
        // charge
        if j < body.len() && (body[j] == b'+' || body[j] == b'-') {
            let sign = body[j];
            let cstart = j;
            j += 1;
            let mut mag: i32 = 1;
            if j < body.len() && body[j].is_ascii_digit() {
                mag = (body[j] - b'0') as i32;
                j += 1;
                if j < body.len() && body[j].is_ascii_digit() {
                    mag = mag * 10 + (body[j] - b'0') as i32;
                    j += 1;
                }
            } else {
                while j < body.len() && body[j] == sign {
                    mag += 1;
                    j += 1;
                }
            }
            if mag > 15 {
                return Err(self.err(at(cstart), K::BadBracket("charge beyond ±15".into())));
            }
            atom.charge = if sign == b'+' { mag as i8 } else { -mag as i8 };
        }
        // atom class
        if j < body.len() && body[j] == b':' {
            j += 1;
            let cs = j;
            let mut class: u64 = 0;
            while j < body.len() && body[j].is_ascii_digit() {
                class = class * 10 + (body[j] - b'0') as u64;
                if class > u32::MAX as u64 {
                    return Err(self.err(at(cs), K::BadBracket("atom class too large".into())));
                }
                j += 1;
            }
            if j == cs {
                return Err(self.err(at(cs), K::BadBracket("expected a number after ':'".into())));
            }
            atom.class = class as u32;
        }
        if j != body.len() {
            let ch = char_at(self.src, at(j));
            return Err(self.err(
                at(j),
                K::BadBracket(format!("unexpected '{ch}' inside brackets")),
            ));
        }
        if z == 1 && atom.hydrogens > 0 {
            return Err(self.err(
                at(sym_start),
                K::BadBracket("a hydrogen atom cannot carry hydrogens".into()),
            ));
        }
        self.i = close + 1;
        Ok(atom)
    }

    /// Implicit hydrogens, folding of plain explicit hydrogens, graph construction,
    /// kekulisation, valence check and aromaticity perception.
    fn finish(mut self) -> Result<Molecule, SmilesError> {
        let n = self.atoms.len();
        // Bond-order sums with aromatic bonds counted as 1, for implicit hydrogens.
        let mut sum = vec![0u32; n];
        let mut degree = vec![0u32; n];
        let mut arom_bonds = vec![0u32; n];
        for b in &self.bonds {
            let aromatic_pair = self.atoms[b.a].atom.aromatic && self.atoms[b.b].atom.aromatic;
            let v = match b.kind {
                RawBondKind::Double => 2,
                RawBondKind::Triple => 3,
                RawBondKind::Quadruple => 4,
                _ => 1,
            };
            for x in [b.a, b.b] {
                sum[x] += v;
                degree[x] += 1;
                if aromatic_pair && matches!(b.kind, RawBondKind::Implicit | RawBondKind::Aromatic)
                {
                    arom_bonds[x] += 1;
                }
            }
        }
        for (i, ra) in self.atoms.iter_mut().enumerate() {
            if ra.bracket {
                continue;
            }
            let vals = element::default_valences(ra.atom.element);
            if vals.is_empty() {
                continue;
            }
            let s = sum[i];
            let v = vals.iter().copied().map(u32::from).find(|&v| v >= s);
            let h = match v {
                Some(v) if ra.atom.aromatic && arom_bonds[i] > 0 => v.saturating_sub(s + 1),
                Some(v) => v - s,
                None => 0,
            };
            ra.atom.hydrogens = h as u8;
        }
        // Fold plain explicit hydrogens.
        let mut fold_into = vec![usize::MAX; n];
        for b in &self.bonds {
            for (h, other) in [(b.a, b.b), (b.b, b.a)] {
                let ha = &self.atoms[h];
                if ha.atom.element == 1
                    && ha.atom.isotope == 0
                    && ha.atom.charge == 0
                    && ha.atom.class == 0
                    && ha.atom.hydrogens == 0
                    && ha.atom.chirality.is_none()
                    && degree[h] == 1
                    && !matches!(
                        b.kind,
                        RawBondKind::Double | RawBondKind::Triple | RawBondKind::Quadruple
                    )
                    && self.atoms[other].atom.element != 1
                {
                    fold_into[h] = other;
                }
            }
        }
        // A folded hydrogen may carry a cis/trans mark; hand it, reversed, to the other single
        // bond of its neighbour so the configuration survives (`[H]/C(F)=C/F` is cis-FC=CF).
        for h in 0..n {
            let t = fold_into[h];
            if t == usize::MAX {
                continue;
            }
            let Some(hb) = self.bonds.iter().position(|b| {
                (b.a == h || b.b == h) && matches!(b.kind, RawBondKind::Up | RawBondKind::Down)
            }) else {
                continue;
            };
            let hbond = self.bonds[hb];
            // Symbol read H→t.
            let up_ht = (hbond.kind == RawBondKind::Up) == (hbond.a == h);
            let other = self.bonds.iter().position(|b| {
                (b.a == t || b.b == t)
                    && b.a != h
                    && b.b != h
                    && matches!(b.kind, RawBondKind::Single | RawBondKind::Implicit)
            });
            if let Some(ob) = other {
                let o = self.bonds[ob];
                let n_first = o.a != t; // the other atom is written before t
                let want_up_nt = !up_ht;
                let up = if n_first { want_up_nt } else { !want_up_nt };
                self.bonds[ob].kind = if up {
                    RawBondKind::Up
                } else {
                    RawBondKind::Down
                };
            }
        }
        let mut new_index = vec![usize::MAX; n];
        let mut mol = Molecule::new();
        let mut positions = Vec::with_capacity(n);
        for i in 0..n {
            if fold_into[i] == usize::MAX {
                new_index[i] = positions.len();
                positions.push(self.atoms[i].pos);
            }
        }
        for i in 0..n {
            if fold_into[i] != usize::MAX {
                let t = fold_into[i];
                self.atoms[t].atom.hydrogens = self.atoms[t].atom.hydrogens.saturating_add(1);
            }
        }
        for i in 0..n {
            if fold_into[i] != usize::MAX {
                continue;
            }
            let mut atom = std::mem::replace(&mut self.atoms[i].atom, Atom::new(0));
            if atom.chirality.is_some() {
                atom.stereo_refs = self.atoms[i]
                    .refs
                    .iter()
                    .map(|&r| {
                        if r == IMPLICIT_H_REF || fold_into.get(r).is_some_and(|&f| f != usize::MAX)
                        {
                            StereoRef::ImplicitH
                        } else {
                            StereoRef::Atom(AtomIdx::new(new_index[r]))
                        }
                    })
                    .collect();
            }
            mol.add_atom(atom);
        }
        let mut aromatic_input = Vec::with_capacity(self.bonds.len());
        let mut marks: Vec<Option<bool>> = Vec::with_capacity(self.bonds.len());
        for b in &self.bonds {
            if fold_into[b.a] != usize::MAX || fold_into[b.b] != usize::MAX {
                continue;
            }
            let (a, bb) = (new_index[b.a], new_index[b.b]);
            let both_arom =
                mol.graph[AtomIdx::new(a)].aromatic && mol.graph[AtomIdx::new(bb)].aromatic;
            let (order, mark, arom) = match b.kind {
                RawBondKind::Single => (BondOrder::Single, None, false),
                RawBondKind::Double => (BondOrder::Double, None, false),
                RawBondKind::Triple => (BondOrder::Triple, None, false),
                RawBondKind::Quadruple => (BondOrder::Quadruple, None, false),
                RawBondKind::Aromatic => (BondOrder::Single, None, true),
                RawBondKind::Implicit => (BondOrder::Single, None, both_arom),
                // `/` as read from the lower to the higher atom index (text order).
                RawBondKind::Up => (BondOrder::Single, Some(true), false),
                RawBondKind::Down => (BondOrder::Single, Some(false), false),
            };
            mol.add_bond(AtomIdx::new(a), AtomIdx::new(bb), Bond::new(order));
            aromatic_input.push(arom);
            marks.push(mark);
        }
        resolve_double_bond_stereo(&mut mol, &marks, &aromatic_input)
            .map_err(|(atom, kind)| SmilesError::new(self.col_of(positions[atom.index()]), kind))?;
        let ring_bond = rings::ring_bonds(&mol);
        let ring_atom = rings::ring_atoms(&mol, &ring_bond);
        kekulize::kekulize(&mut mol, &aromatic_input, &ring_bond, &ring_atom)
            .map_err(|(atom, kind)| SmilesError::new(self.col_of(positions[atom.index()]), kind))?;
        check_valences(&mol)
            .map_err(|(atom, kind)| SmilesError::new(self.col_of(positions[atom.index()]), kind))?;
        aromaticity::perceive_with(&mut mol, &ring_bond, &ring_atom);
        Ok(mol)
    }

    fn col_of(&self, byte_pos: usize) -> usize {
        self.col(byte_pos)
    }
}

/// Turn `/` and `\` marks into a configuration on each double bond they flank.
///
/// `marks[e]` is `Some(true)` for `/` read from the lower to the higher atom index of bond `e`.
/// Each mark is normalised to read "substituent → double-bond atom" on the first end and
/// "double-bond atom → substituent" on the second; equal symbols then mean trans (OpenSMILES
/// 3.5.2: `F/C=C/F` is trans, `F/C=C\F` cis). A double bond with marks on one side only keeps
/// no configuration; two marks on one side that say the same thing are a conflict.
fn resolve_double_bond_stereo(
    mol: &mut Molecule,
    marks: &[Option<bool>],
    aromatic_input: &[bool],
) -> Result<(), (AtomIdx, K)> {
    if marks.iter().all(|m| m.is_none()) {
        return Ok(());
    }
    let edges: Vec<_> = mol.graph.edge_indices().collect();
    for e in edges {
        if mol.graph[e].order != BondOrder::Double || aromatic_input[e.index()] {
            continue;
        }
        let (x, y) = mol.graph.edge_endpoints(e).expect("edge exists");
        // Normalised symbol of each marked neighbour bond: for x read n→x, for y read y→n.
        let side = |end: AtomIdx,
                    other: AtomIdx,
                    into_end: bool|
         -> Result<Option<(AtomIdx, bool)>, (AtomIdx, K)> {
            let mut found: Option<(AtomIdx, bool)> = None;
            for (n, b) in mol.neighbours(end) {
                if n == other {
                    continue;
                }
                let Some(up) = marks[b.index()] else { continue };
                // `up` reads lower→higher index; flip to the wanted direction.
                let reads_n_to_end = n < end;
                let sym = if reads_n_to_end == into_end { up } else { !up };
                match found {
                    None => found = Some((n, sym)),
                    Some((_, s0)) if s0 == sym => return Err((end, K::ConflictingStereo)),
                    Some(_) => {}
                }
            }
            Ok(found)
        };
        let left = side(x, y, true)?;
        let right = side(y, x, false)?;
        if let (Some((a, sl)), Some((b, sr))) = (left, right) {
            mol.graph[e].stereo = Some(DoubleBondStereo {
                a,
                b,
                trans: sl == sr,
            });
        }
    }
    Ok(())
}

/// The character starting at byte `b` of `s` (for messages).
fn char_at(s: &str, b: usize) -> char {
    s.get(b..).and_then(|t| t.chars().next()).unwrap_or('?')
}

fn bond_kind(c: u8) -> RawBondKind {
    match c {
        b'-' => RawBondKind::Single,
        b'=' => RawBondKind::Double,
        b'#' => RawBondKind::Triple,
        b'$' => RawBondKind::Quadruple,
        b':' => RawBondKind::Aromatic,
        b'/' => RawBondKind::Up,
        _ => RawBondKind::Down,
    }
}

fn flip(k: RawBondKind) -> RawBondKind {
    match k {
        RawBondKind::Up => RawBondKind::Down,
        RawBondKind::Down => RawBondKind::Up,
        other => other,
    }
}

/// Check every atom's total valence against the allowed valences of its element and charge
/// (radicals, below the lowest allowed valence, pass).
pub(crate) fn check_valences(mol: &Molecule) -> Result<(), (AtomIdx, K)> {
    for a in mol.atoms() {
        let atom = mol.atom(a);
        let Some(allowed) = element::allowed_valences(atom.element, atom.charge) else {
            continue;
        };
        let v = mol.valence(a);
        // Below the lowest allowed valence is a radical, which only a bracket atom can express
        // (`[CH3]`, `[H]`); it is accepted. Between or above the allowed values is an error.
        let radical = v < allowed[0] as u32;
        // Valence 5 of N (nitro written N(=O)=O) needs a multiple bond; five σ bonds do not
        // exist, although the organic-subset rule would otherwise give N(C)(C)(C)C one H.
        let sigma_only_pentavalent_n = atom.element == 7
            && atom.charge == 0
            && v == 5
            && mol
                .neighbours(a)
                .all(|(_, b)| mol.bond(b).order == BondOrder::Single);
        if sigma_only_pentavalent_n || (!radical && !allowed.iter().any(|&x| x as u32 == v)) {
            return Err((
                a,
                K::Valence {
                    element: atom.symbol().to_string(),
                    valence: v,
                    charge: atom.charge,
                    allowed: allowed
                        .iter()
                        .map(|x| x.to_string())
                        .collect::<Vec<_>>()
                        .join(" or "),
                },
            ));
        }
    }
    Ok(())
}
