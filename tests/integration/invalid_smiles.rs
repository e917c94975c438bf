//! Invalid SMILES: every input in the table must be rejected with the expected error kind, and the
//! error position must point at the character where a user would want the caret (0-based
//! character index, not byte offset). Plus property tests that the reader never panics and that
//! whatever it accepts round-trips through the canonical writer.
//!
//! The `regression_*` functions at the bottom pin reader bugs found while writing these tests
//! (each now fixed), with the behaviour expected.

use lumisift::chem::{SmilesErrorKind as K, canonical_smiles, facts, parse_smiles};
use proptest::prelude::*;
use proptest::test_runner::Config;

/// Test of the error kind (written with `matches!`).
type KindCheck = fn(&K) -> bool;

/// (SMILES, expected 0-based caret position, expected kind, why the input is invalid).
type Case = (&'static str, usize, KindCheck, &'static str);

/// A table row: `case!(smiles, caret, pattern [if guard], why)`; the pattern is tested with
/// `matches!` on the error kind.
macro_rules! case {
    ($s:expr, $pos:expr, $p:pat $(if $g:expr)?, $why:expr) => {
        ($s, $pos, (|k: &K| matches!(k, $p $(if $g)?)) as KindCheck, $why)
    };
}

/// Parse `smiles`, expect an error of kind `kind_ok` at character `pos`; describe any mismatch.
fn check(smiles: &str, pos: usize, kind_ok: KindCheck, why: &str) -> Result<(), String> {
    let e = match parse_smiles(smiles) {
        Ok(m) => {
            return Err(format!(
                "{smiles:?} ({why}): accepted, canonical {:?}",
                canonical_smiles(&m)
            ));
        }
        Err(e) => e,
    };
    let mut problems = Vec::new();
    if !kind_ok(&e.kind) {
        problems.push(format!("kind {:?}", e.kind));
    }
    if e.position != pos {
        problems.push(format!("position {} (expected {pos})", e.position));
    }
    if e.column() != e.position + 1 {
        problems.push(format!("column {} for position {}", e.column(), e.position));
    }
    let shown = e.to_string();
    if !shown.starts_with(&format!("column {}: ", e.position + 1)) {
        problems.push(format!("message {shown:?} does not start with the column"));
    }
    // The caret must sit on a character of the input (only the empty input has none).
    let chars = smiles.chars().count();
    if chars > 0 && e.position >= chars {
        problems.push(format!(
            "position {} past the end ({chars} chars)",
            e.position
        ));
    }
    if problems.is_empty() {
        Ok(())
    } else {
        let caret: String = smiles
            .chars()
            .map(|c| if c.is_whitespace() { ' ' } else { c })
            .collect();
        Err(format!(
            "{smiles:?} ({why}): {}\n      {caret}\n      {}^ expected\n      {}^ got",
            problems.join("; "),
            " ".repeat(pos),
            " ".repeat(e.position)
        ))
    }
}

/// Run every case of a table through [`check`] and report all failures at once.
fn run_table(cases: &[Case]) {
    let failures: Vec<String> = cases
        .iter()
        .filter_map(|&(s, pos, kind, why)| check(s, pos, kind, why).err())
        .collect();
    assert!(
        failures.is_empty(),
        "{} of {} invalid SMILES misreported:\n{}",
        failures.len(),
        cases.len(),
        failures.join("\n")
    );
}

#[rustfmt::skip]
const INVALID: &[Case] = &[
    // --- empty input -------------------------------------------------------------------------
    case!("", 0, K::Empty, "empty string"),
    case!("   ", 0, K::Empty, "spaces only"),
    case!("\t\n", 0, K::Empty, "tab and newline only"),
    // --- ring closures -------------------------------------------------------------------------
    // Caret on the digit that opened the ring that is never closed.
    case!("C1CC", 1, K::UnclosedRing(1), "unclosed ring 1"),
    case!("C1CC2CC1", 4, K::UnclosedRing(2), "ring 2 never closed"),
    case!("C(C)C1CC", 5, K::UnclosedRing(1), "unclosed ring after a branch"),
    case!("C12C", 1, K::UnclosedRing(1), "two open rings: the first is reported"),
    // Caret on the closing digit.
    case!("C11", 2, K::RingToSelf(1), "ring closes on its own atom"),
    case!("CC11", 3, K::RingToSelf(1), "ring closes on its own atom"),
    // C12CCC12 would bond atoms 0 and 3 twice (two ring closures between the same pair).
    case!("C12CCC12", 7, K::DuplicateBond(2), "double ring closure, same atoms"),
    case!("C12CC12", 6, K::DuplicateBond(2), "double ring closure, same atoms"),
    case!("C1C1", 3, K::DuplicateBond(1), "ring closure duplicates the chain bond"),
    case!("C=1CCCC#1", 8, K::ConflictingRingBond(1), "'=' and '#' on one ring bond"),
    case!("CC-1CCCC=1", 9, K::ConflictingRingBond(1), "'-' and '=' on one ring bond"),
    // Caret on the '%'.
    case!("C%1CC%1", 1, K::BadRingNumber, "'%' needs two digits"),
    case!("C%", 1, K::BadRingNumber, "'%' at the end"),
    case!("C%a1", 1, K::BadRingNumber, "'%' followed by a letter"),
    case!("C%12CC%1", 6, K::BadRingNumber, "second '%' has one digit"),
    case!("C%(100)CC%(100)", 1, K::BadRingNumber, "'%(nnn)' is not read"),
    // A ring bond needs an atom before it.
    case!("1CC1", 0, K::NothingToBond, "ring digit before any atom"),
    case!("%12C", 0, K::NothingToBond, "'%nn' before any atom"),
    case!("C1.1", 3, K::NothingToBond, "ring digit right after '.'"),
    // --- branches ------------------------------------------------------------------------------
    // Caret on the '(' that is never closed (the outer one in "C((C)C").
    case!("C(C", 1, K::UnclosedBranch, "branch never closed"),
    case!("C((C)C", 1, K::UnclosedBranch, "outer branch never closed"),
    case!("C(C)(C", 4, K::UnclosedBranch, "second branch never closed"),
    case!("C1CC(C1", 4, K::UnclosedBranch, "branch never closed after ring"),
    case!("C(", 1, K::UnclosedBranch, "'(' at the end"),
    case!("CC)C", 2, K::UnmatchedClose, "')' without '('"),
    case!("C(C))", 4, K::UnmatchedClose, "one ')' too many"),
    case!(")C", 0, K::UnmatchedClose, "leading ')'"),
    case!("(C)C", 0, K::NothingToBond, "branch before any atom"),
    case!("()", 0, K::NothingToBond, "empty branch before any atom"),
    case!("C()C", 1, K::EmptyBranch, "empty branch"),
    case!("CC()", 2, K::EmptyBranch, "empty branch at the end"),
    // --- unknown elements and elements outside the organic subset ------------------------------
    case!("[Xx]", 1, K::UnknownElement(s) if s == "Xx", "no element Xx"),
    case!("[Zz]", 1, K::UnknownElement(s) if s == "Zz", "no element Zz"),
    case!("Q", 0, K::UnknownElement(s) if s == "Q", "no element Q"),
    case!("CCX", 2, K::UnknownElement(s) if s == "X", "no element X"),
    case!("CL", 1, K::UnknownElement(s) if s == "L", "chlorine is Cl, not CL"),
    case!("[xx]", 1, K::UnknownElement(_), "no element, lowercase"),
    case!("Zn", 0, K::NeedsBrackets(s) if s == "Zn", "zinc needs brackets"),
    case!("Al", 0, K::NeedsBrackets(s) if s == "Al", "aluminium needs brackets"),
    case!("CXe", 1, K::NeedsBrackets(s) if s == "Xe", "xenon needs brackets"),
    case!("c1ccsec1", 4, K::NeedsBrackets(s) if s == "se", "aromatic Se: [se]"),
    // --- lowercase (aromatic) symbol of an element that cannot be aromatic ---------------------
    case!("[f]", 1, K::NotAromaticElement(s) if s == "f", "fluorine is not aromatic"),
    case!("[i]", 1, K::NotAromaticElement(s) if s == "i", "iodine is not aromatic"),
    // --- aromatic input that cannot be kekulised ------------------------------------------------
    // The caret is on the first atom left without a double-bond partner.
    case!("c1cccc1", 0, K::Kekulise, "5 carbons need 5 π partners: odd"),
    // 4 c + 1 pyridine-type n all need a double bond: 5, odd (pyrrole needs [nH]).
    case!("n1cccc1", 0, K::Kekulise, "pyrrole written without [nH]"),
    case!("[nH]1ccccc1", 5, K::Kekulise, "six-ring with [nH]: 5 carbons, odd"),
    case!("o1ccccc1", 2, K::Kekulise, "six-ring with o: 5 carbons, odd"),
    case!("c1ccnc1", 0, K::Kekulise, "five-ring of 4 c and an n, odd"),
    case!("c1cc(=O)ccc1", 0, K::Kekulise, "c(=O) leaves 5 carbons, odd"),
    case!("C=c1ccccc1", 4, K::Kekulise, "exocyclic C=c leaves 5 carbons"),
    case!("c1cc[si]cc1", 4, K::Valence { .. }, "[si] without H cannot alternate"),
    // --- aromatic atoms outside rings ----------------------------------------------------------
    case!("c1ccccc1c", 8, K::AromaticOutsideRing(s) if s == "c", "trailing c"),
    case!("cc", 0, K::AromaticOutsideRing(s) if s == "c", "aromatic chain"),
    case!("Cc", 1, K::AromaticOutsideRing(s) if s == "c", "aromatic atom on a chain"),
    case!("c", 0, K::AromaticOutsideRing(s) if s == "c", "lone aromatic atom"),
    case!("Clc", 2, K::AromaticOutsideRing(s) if s == "c", "c after Cl"),
    case!("[nH]", 0, K::AromaticOutsideRing(s) if s == "n", "lone [nH]"),
    // --- bonds without a partner ---------------------------------------------------------------
    // Caret on the dangling bond symbol.
    case!("C=", 1, K::DanglingBond('='), "'=' at the end"),
    case!("C(=)C", 2, K::DanglingBond('='), "'=' alone in a branch"),
    case!("C-.C", 1, K::DanglingBond('-'), "'-' before '.'"),
    case!("C#", 1, K::DanglingBond('#'), "'#' at the end"),
    case!("C$", 1, K::DanglingBond('$'), "'$' (quadruple) at the end"),
    case!("C/", 1, K::DanglingBond('/'), "'/' at the end"),
    case!("C\\", 1, K::DanglingBond('\\'), "'\\' at the end"),
    case!("c1ccccc1:", 8, K::DanglingBond(':'), "':' at the end"),
    case!("C1CCCCC1=", 8, K::DanglingBond('='), "'=' after a ring"),
    case!("C=(C)C", 1, K::DanglingBond('='), "bond symbol before '('"),
    case!("C=C=C=", 5, K::DanglingBond('='), "'=' at the end of a cumulene"),
    case!("=C", 0, K::NothingToBond, "leading '='"),
    // Caret on the second bond symbol.
    case!("C==C", 2, K::UnexpectedChar('='), "two bond symbols"),
    case!("C=#C", 2, K::UnexpectedChar('#'), "two bond symbols"),
    // --- dots ----------------------------------------------------------------------------------
    case!(".C", 0, K::UnexpectedChar('.'), "leading '.'"),
    case!("C..C", 2, K::UnexpectedChar('.'), "empty component"),
    // --- bracket atoms -------------------------------------------------------------------------
    case!("[C", 0, K::UnclosedBracket, "'[' never closed"),
    case!("C[CH3", 1, K::UnclosedBracket, "'[' never closed"),
    case!("[13CH4", 0, K::UnclosedBracket, "'[' never closed"),
    // Caret where the element symbol should be.
    case!("[]", 1, K::BadBracket(_), "empty brackets"),
    case!("[12]", 3, K::BadBracket(_), "isotope without element"),
    case!("[13]C", 3, K::BadBracket(_), "isotope without element"),
    case!("[1234C]", 1, K::BadBracket(_), "isotope above 999"),
    // Caret on the sign of the charge.
    case!("[C+99]", 2, K::BadBracket(_), "charge +99"),
    case!("[C+16]", 2, K::BadBracket(_), "charge beyond +15"),
    // Caret on the '@' of an unsupported chirality class.
    case!("[C@XX]", 2, K::UnsupportedChirality(s) if s == "@XX", "class @XX"),
    case!("[C@TH3]", 2, K::UnsupportedChirality(s) if s == "@TH3", "no @TH3"),
    case!("[C@TB1](F)(Cl)(Br)I", 2, K::UnsupportedChirality(_), "@TB1 not read"),
    case!("[C@SP1](F)(Cl)(Br)I", 2, K::UnsupportedChirality(_), "@SP1 not read"),
    case!("[C@OH1]", 2, K::UnsupportedChirality(_), "@OH1 not read"),
    case!("[C@AL1]", 2, K::UnsupportedChirality(_), "@AL1 not read"),
    case!("[HH1]", 1, K::BadBracket(_), "a hydrogen carrying a hydrogen"),
    case!("[H+H]", 3, K::BadBracket(_), "hydrogen count after the charge"),
    case!("[CH10]", 4, K::BadBracket(_), "two-digit hydrogen count"),
    case!("[CX]", 2, K::BadBracket(_), "junk after the symbol"),
    case!("[C+-]", 3, K::BadBracket(_), "two charge signs"),
    case!("[C:]", 3, K::BadBracket(_), "atom class without a number"),
    case!("[C:99999999999]", 3, K::BadBracket(_), "atom class beyond u32"),
    case!("[C@@@H]", 4, K::BadBracket(_), "three '@'"),
    case!("[C]]", 3, K::UnexpectedChar(']'), "stray ']'"),
    // --- bad valence (caret on the first character of the offending atom) ----------------------
    case!("[CH5]", 0, K::Valence { element, valence: 5, .. } if element == "C", "CH5"),
    case!("C(C)(C)(C)(C)C", 0, K::Valence { valence: 5, .. }, "pentavalent C"),
    case!("CC(C)(C)(C)C", 1, K::Valence { valence: 5, .. }, "pentavalent C"),
    case!("C=C(C)(C)C", 2, K::Valence { valence: 5, .. }, "pentavalent C"),
    case!("FC(F)(F)(F)F", 1, K::Valence { element, .. } if element == "C", "CF5"),
    case!("BrC(Br)(Br)(Br)Br", 2, K::Valence { .. }, "CBr5"),
    case!("O(C)(C)C", 0, K::Valence { element, valence: 3, .. } if element == "O", "O3"),
    case!("O=O=O", 2, K::Valence { element, valence: 4, .. } if element == "O", "O4"),
    case!("FF(F)", 1, K::Valence { element, valence: 2, .. } if element == "F", "F2"),
    case!("ClCl(C)", 2, K::Valence { element, valence: 2, .. } if element == "Cl", "Cl2"),
    case!("IC=C=I", 5, K::Valence { element, valence: 2, .. } if element == "I", "I=C"),
    case!("C#C#C", 2, K::Valence { valence: 6, .. }, "hexavalent carbon"),
    case!("[NH4]", 0, K::Valence { element, valence: 4, charge: 0, .. } if element == "N", "NH4"),
    case!("[NH5+]", 0, K::Valence { charge: 1, .. }, "NH5+"),
    case!("[OH3]", 0, K::Valence { .. }, "neutral OH3"),
    case!("[O-](C)C", 0, K::Valence { charge: -1, .. }, "O- with two bonds"),
    case!("[N+](C)(C)(C)(C)C", 0, K::Valence { charge: 1, .. }, "N+ with 5 bonds"),
    case!("[C-](C)(C)(C)C", 0, K::Valence { charge: -1, .. }, "C- with 4 bonds"),
    case!("C=N(=O)(=O)C", 2, K::Valence { valence: 7, .. }, "heptavalent N"),
    case!("S(=O)(=O)(=O)(=O)C", 0, K::Valence { valence: 9, .. }, "S valence 9"),
    case!("B(C)(C)(C)C", 0, K::Valence { element, valence: 4, .. } if element == "B", "BC4"),
    case!("[B-](C)(C)(C)(C)C", 0, K::Valence { charge: -1, .. }, "B- with 5 bonds"),
    case!("[H]C([H])([H])([H])[H]", 3, K::Valence { valence: 5, .. }, "CH5 via [H]"),
    // --- junk, whitespace and non-ASCII (caret is a character index, not a byte offset) ---------
    case!("C C", 1, K::UnexpectedChar(' '), "text after a space"),
    case!(" C", 0, K::UnexpectedChar(' '), "leading space"),
    case!("CC C", 2, K::UnexpectedChar(' '), "text after a space"),
    case!("CCCCCCCCCCCCCCCCCCC!", 19, K::UnexpectedChar('!'), "'!'"),
    case!("Cé", 1, K::UnexpectedChar('é'), "non-ASCII letter"),
    case!("CC🙂C", 2, K::UnexpectedChar('🙂'), "emoji (4 bytes)"),
    case!("Ｃ", 0, K::UnexpectedChar('Ｃ'), "full-width C"),
    case!("C\u{a0}C", 1, K::UnexpectedChar('\u{a0}'), "no-break space"),
    case!("C→C", 1, K::UnexpectedChar('→'), "arrow"),
    case!("é", 0, K::UnexpectedChar('é'), "only a non-ASCII letter"),
    case!("[é]", 1, K::BadBracket(_), "non-ASCII in brackets"),
    case!("[Cé]", 2, K::BadBracket(_), "non-ASCII after the symbol"),
];

#[test]
fn invalid_smiles_are_rejected_with_kind_and_caret() {
    run_table(INVALID);
}

#[test]
fn invalid_table_is_large_and_has_no_duplicates() {
    assert!(INVALID.len() >= 60, "only {} cases", INVALID.len());
    let mut seen = std::collections::BTreeSet::new();
    for (s, ..) in INVALID {
        assert!(seen.insert(*s), "duplicate case {s:?}");
    }
}

/// Near misses of the invalid cases that are valid and must stay accepted (so the table above
/// tests the specific fault and not a blanket rejection).
#[test]
fn near_misses_are_accepted() {
    for s in [
        "C1CC1",
        "C12CC1C2",      // two different ring bonds from one atom
        "C=1CCCC1",      // ring bond symbol on one end only
        "C1CCCC=1",      // ... on the other end
        "C1.C1",         // ring bond across '.', OpenSMILES allows it
        "C%10CC%10",     // two-digit ring number
        "C(C)(C)(C)C",   // tetravalent C with four branches
        "C$C",           // quadruple bond
        "c1cc[se]c1",    // selenophene in brackets
        "c1ccsc1",       // thiophene
        "[nH]1cccc1",    // pyrrole with [nH]
        "c1cc[siH]cc1",  // silabenzene with its hydrogen
        "C[N+](C)(C)C",  // tetramethylammonium
        "CN(=O)=O",      // hypervalent nitro spelling
        "C[N+](=O)[O-]", // charge-separated nitro
        "[Na+].[Cl-]",   // salt in brackets
        "[2H]C([2H])([2H])[2H]",
        "[C@@H](F)(Cl)Br",
        "C1CCCCC1 ", // trailing blank is tolerated
    ] {
        if let Err(e) = parse_smiles(s) {
            panic!("{s:?} rejected: {e}");
        }
    }
}

// --- properties ----------------------------------------------------------------------------------
//
// Failure persistence is off (no regression files are written next to the sources); seeds are
// random, so each run explores new inputs.

const ALPHABET: &str = "CNOScnosBbPpFI[]()=#@+-123%0.:/\\H*";

/// Parsing never panics; if it succeeds, the canonical string re-parses, to the same canonical
/// string, and the molecule can be weighed (or names the isotope it has no mass for).
fn parse_and_round_trip(s: &str) -> Result<(), TestCaseError> {
    let Ok(mol) = parse_smiles(s) else {
        return Ok(());
    };
    let canon = canonical_smiles(&mol);
    let again = parse_smiles(&canon).map_err(|e| {
        TestCaseError::fail(format!("{s:?} -> canonical {canon:?} does not parse: {e}"))
    })?;
    let canon2 = canonical_smiles(&again);
    prop_assert_eq!(&canon2, &canon, "input {:?}", s);
    // Weighing succeeds, except for an isotope without a tabulated mass (e.g. [1B]), which is
    // a clear error, not a panic.
    match facts(&mol) {
        Ok(_) | Err(lumisift::chem::ChemError::NoIsotopeMass { .. }) => {}
        Err(e) => prop_assert!(false, "{:?}: no facts: {}", s, e),
    }
    Ok(())
}

fn config(cases: u32) -> Config {
    Config {
        cases,
        failure_persistence: None,
        ..Config::default()
    }
}

fn alphabet_string(max_len: usize) -> impl Strategy<Value = String> {
    let chars: Vec<char> = ALPHABET.chars().collect();
    proptest::collection::vec(proptest::sample::select(chars), 0..max_len)
        .prop_map(|v| v.into_iter().collect())
}

/// SMILES tokens, weighted towards atoms, so that far more random strings are valid molecules
/// than with single characters (about 4 % instead of 1.5 %, many with several atoms and rings).
const TOKENS: &[&str] = &[
    "C", "C", "C", "C", "c", "c", "c", "c", "N", "n", "O", "o", "S", "s", "B", "b", "P", "F", "Cl",
    "Br", "I", "[nH]", "[NH+]", "[n+]", "[O-]", "[bH]", "[13C]", "[2H]", "[H]", "[se]", "*", "(",
    "(", ")", ")", "=", "=", "#", "1", "1", "2", "2", "3", "%10", ".", "/", "\\", ":", "-",
];
const STEREO_TOKENS: &[&str] = &["[C@@H]", "[C@H]", "[C@]", "[C@@]"];

fn token_string(tokens: Vec<&'static str>) -> impl Strategy<Value = String> {
    proptest::collection::vec(proptest::sample::select(tokens), 0..20).prop_map(|v| v.concat())
}

proptest! {
    #![proptest_config(config(2000))]

    #[test]
    fn smiles_alphabet_strings_never_panic_and_round_trip(s in alphabet_string(24)) {
        parse_and_round_trip(&s)?;
    }

    #[test]
    fn token_strings_round_trip(s in token_string(TOKENS.to_vec())) {
        parse_and_round_trip(&s)?;
    }
}

proptest! {
    #![proptest_config(config(2000))]

    /// The same with every token, stereo marks included (minimal failing inputs found earlier
    /// are pinned in the `regression_*` tests below).
    #[test]
    fn all_token_strings_round_trip(
        s in token_string(TOKENS.iter().chain(STEREO_TOKENS).copied().collect())
    ) {
        parse_and_round_trip(&s)?;
    }
}

proptest! {
    #![proptest_config(config(500))]

    #[test]
    fn any_unicode_string_never_panics(s in any::<String>()) {
        parse_and_round_trip(&s)?;
    }
}

proptest! {
    #![proptest_config(config(500))]

    /// SMILES characters mixed with arbitrary Unicode, so errors are also raised after
    /// multi-byte characters inside brackets (character positions vs byte offsets).
    #[test]
    fn smiles_mixed_with_unicode_never_panics(
        parts in proptest::collection::vec(
            prop_oneof![
                3 => proptest::sample::select(ALPHABET.chars().collect::<Vec<_>>()),
                1 => any::<char>(),
            ],
            0..24,
        )
    ) {
        let s: String = parts.into_iter().collect();
        if let Err(e) = parse_smiles(&s) {
            prop_assert!(e.position <= s.chars().count(), "{:?}: position {}", s, e.position);
        }
        parse_and_round_trip(&s)?;
    }
}

fn canon(s: &str) -> String {
    canonical_smiles(&parse_smiles(s).unwrap_or_else(|e| panic!("{s:?}: {e}")))
}

/// Regression (fixed in the reader/writer); what used to happen:
///
/// A plain `[H]` is folded into its neighbour only over a single or implicit bond; joined by
/// `/`, `\` or `:` it stays an explicit atom. The canonical string then carries `[H]`, which
/// the next parse folds: `S/[H]` -> `[H]S` -> `S`, so the canonical string was not a fixed
/// point. Now the hydrogen is folded and its mark handed, reversed, to the other substituent:
/// `[H]/C(F)=C/F` is cis-difluoroethene.
#[test]
fn regression_explicit_hydrogen_on_directional_bond_is_not_folded() {
    for (with_h, plain) in [
        ("[H]/C(F)=C/F", "F/C=C\\F"),
        ("F/C=C/[H]", "C=CF"),
        ("S/[H]", "S"),
        ("[H]:C", "C"),
    ] {
        let c = canon(with_h);
        assert_eq!(
            canon(&c),
            c,
            "{with_h:?}: canonical {c:?} is not a fixed point"
        );
        assert_eq!(c, canon(plain), "{with_h:?} vs {plain:?}");
    }
}

/// Regression (fixed in the reader/writer); what used to happen:
///
/// A radical centre written with a stereo mark, `C#C[C@@H]`: the mark is dropped in the output
/// (not a stereocentre) but still enters the ranking, so `C#C[CH]` is written and re-reads as
/// `[CH]C#C` (see also `aromaticity::regression_dropped_stereo_mark_changes_canonical_smiles`).
#[test]
fn regression_dropped_stereo_mark_breaks_fixed_point() {
    for s in ["C#C[C@@H]", "C#PC[C@H]"] {
        let c = canon(s);
        assert_eq!(canon(&c), c, "{s:?}: canonical {c:?} is not a fixed point");
    }
}

// --- regressions: reader bugs found by these tests, now fixed -------------------------------------------------

/// Regression (fixed in the reader/writer); what used to happen:
///
/// Neutral nitrogen with four or five single bonds: the organic-subset rule gives it one implicit
/// hydrogen (next "normal" valence 5), so `N(C)(C)(C)C` reads as NH(CH3)4, formula C4H13N.
/// Pentavalent neutral N with only σ bonds does not exist; RDKit rejects both inputs.
#[test]
fn regression_neutral_nitrogen_with_four_single_bonds_is_accepted() {
    #[rustfmt::skip]
    let cases: &[Case] = &[
        case!("N(C)(C)(C)C", 0, K::Valence { element, .. } if element == "N", "NC4"),
        case!("CN(C)(C)(C)C", 1, K::Valence { element, .. } if element == "N", "NC5"),
    ];
    run_table(cases);
}

/// Regression (fixed in the reader/writer); what used to happen:
///
/// A two-letter element outside the organic subset whose first letter is an organic-subset
/// element (`Na`, `Fe`, `Si`, `Cu`, `Pt`, `Bi`, `Se`) is read as that element followed by an
/// unknown lowercase letter: "unknown element 'a'" at column 2 instead of "'Na' must be written
/// in brackets" at column 1 (what `Zn`, `Al` and `Xe` get).
#[test]
fn regression_unbracketed_element_starting_with_organic_letter() {
    #[rustfmt::skip]
    let cases: &[Case] = &[
        case!("Na", 0, K::NeedsBrackets(s) if s == "Na", "sodium"),
        case!("Fe", 0, K::NeedsBrackets(s) if s == "Fe", "iron"),
        case!("CSi(C)(C)C", 1, K::NeedsBrackets(s) if s == "Si", "silicon"),
        case!("Cu", 0, K::NeedsBrackets(s) if s == "Cu", "copper"),
        case!("Pt", 0, K::NeedsBrackets(s) if s == "Pt", "platinum"),
        case!("Bi", 0, K::NeedsBrackets(s) if s == "Bi", "bismuth"),
        case!("c1ccSec1", 4, K::NeedsBrackets(s) if s == "Se", "selenium"),
    ];
    run_table(cases);
}

/// Regression (fixed in the reader/writer); what used to happen:
///
/// Lowercase two-letter symbols in brackets that are not aromatic elements: `[cl]` is read as
/// aromatic carbon followed by junk `l` (BadBracket at the `l`), and `[he]` is reported as
/// element 'h'. Expected: NotAromaticElement with the full symbol, caret on its first letter,
/// as `[f]` gets.
#[test]
fn regression_lowercase_two_letter_symbol_in_brackets() {
    #[rustfmt::skip]
    let cases: &[Case] = &[
        case!("[cl]", 1, K::NotAromaticElement(s) if s == "cl", "chlorine"),
        case!("[br]", 1, K::NotAromaticElement(s) if s == "br", "bromine"),
        case!("[na]", 1, K::NotAromaticElement(s) if s == "na", "sodium"),
        case!("[he]", 1, K::NotAromaticElement(s) if s == "he", "helium"),
    ];
    run_table(cases);
}

/// Regression (fixed in the reader/writer); what used to happen:
///
/// A trailing '.' (an empty last component) is accepted, although a leading '.' and '..' are
/// rejected; OpenSMILES requires an atom after every dot.
#[test]
fn regression_trailing_dot_is_accepted() {
    #[rustfmt::skip]
    let cases: &[Case] = &[
        case!("C.", 1, K::UnexpectedChar('.') | K::DanglingBond('.'), "trailing ."),
        case!("c1ccccc1.", 8, K::UnexpectedChar('.') | K::DanglingBond('.'), "ditto"),
    ];
    run_table(cases);
}

/// Regression (fixed in the reader/writer); what used to happen:
///
/// Whitespace inside a SMILES is reported as UnexpectedChar(' ') whatever the character, so a
/// tab shows as "unexpected character ' '".
#[test]
fn regression_tab_is_reported_as_space() {
    #[rustfmt::skip]
    let cases: &[Case] = &[
        case!("C\tC", 1, K::UnexpectedChar('\t'), "tab"),
        case!("C\rC", 1, K::UnexpectedChar('\r'), "carriage return"),
    ];
    run_table(cases);
}

/// Regression (fixed in the reader/writer); what used to happen:
///
/// A non-ASCII character inside brackets is shown byte by byte as Latin-1 (`'Ã'` for `é`) in
/// the message; the position is right.
#[test]
fn regression_non_ascii_in_brackets_is_shown_as_mojibake() {
    #[rustfmt::skip]
    let cases: &[Case] = &[
        case!("[é]", 1, K::BadBracket(m) if m.contains('é'), "é as symbol"),
        case!("[Cé]", 2, K::BadBracket(m) if m.contains('é'), "é after symbol"),
    ];
    run_table(cases);
}
