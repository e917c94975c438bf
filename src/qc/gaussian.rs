//! Gaussian (`.log`/`.out`): route line, `Excited State` lines, orientation tables.

use super::Severity;
use super::text::{
    Builder, Lines, element_from_charge, int, last_xyz, multiplicity_rounded, multiplicity_word,
    num, num_before, read_table, state, symmetry,
};

pub(super) fn parse(lines: &Lines, b: &mut Builder) {
    let mut i = 0;
    while i < lines.len() {
        let line = lines.get(i);
        let t = line.trim_start();
        if let Some(v) = line.strip_prefix(" Gaussian ")
            && v.starts_with(|c: char| c.is_ascii_digit())
            && v.contains(':')
        {
            b.version(&v.replacen(':', "", 1));
        } else if line.starts_with(" #")
            && lines.get(i.wrapping_sub(1)).trim_start().starts_with("---")
        {
            // The route section: one or more lines up to a dashed line; a new job starts.
            b.job_start();
            let mut route = String::new();
            let mut j = i;
            while j < lines.len() && !lines.get(j).trim_start().starts_with("---") && j < i + 20 {
                route.push_str(lines.get(j).trim());
                route.push(' ');
                j += 1;
            }
            b.method(&route);
            i = j;
            continue;
        } else if t.starts_with("Excited State") {
            read_state(line, i, b);
        } else if t.starts_with("Standard orientation:")
            || t.starts_with("Input orientation:")
            || t.starts_with("Z-Matrix orientation:")
        {
            // Title, dashes, two header lines, dashes, then rows up to dashes.
            let (atoms, end) = read_table(lines, i + 1, 5, |toks| {
                if toks.len() < 5 {
                    return None;
                }
                let z = element_from_charge(num(toks[1])?)?;
                Some((z, last_xyz(toks)?))
            });
            b.set_geometry(super::text::geometry(&atoms, 1.0));
            i = end;
            continue;
        } else if t.starts_with("Normal termination of Gaussian") {
            b.terminated();
        }
        i += 1;
    }
}

/// `Excited State   1:      Singlet-BU     5.3351 eV  232.39 nm  f=0.1707  <S**2>=0.000`, or the
/// unrestricted `Excited State   1:      3.000-A ...`.
fn read_state(line: &str, i: usize, b: &mut Builder) {
    let Some((head, rest)) = line.split_once(':') else {
        return b.bad(i, "`Excited State n: label E eV`");
    };
    let Some(index) = head.split_whitespace().nth(2).and_then(int) else {
        return b.bad(i, "a state number after `Excited State`");
    };
    let (Some(label), Some(energy)) = (rest.split_whitespace().next(), num_before(rest, "eV"))
    else {
        return b.bad(i, "a state label and an energy in eV");
    };
    let osc = rest
        .split_whitespace()
        .find_map(|t| t.strip_prefix("f="))
        .and_then(num);
    if osc.is_none() {
        b.diag(
            Severity::Warning,
            i,
            "no oscillator strength `f=` on the state line",
        );
    }
    let (mult_part, sym_part) = label.split_once('-').unwrap_or((label, ""));
    let multiplicity =
        multiplicity_word(mult_part).or_else(|| num(mult_part).and_then(multiplicity_rounded));
    b.push_keyed(
        index.to_string(),
        state(multiplicity, symmetry(sym_part), energy, osc, label),
    );
}
