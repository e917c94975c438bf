//! Turbomole `escf`: the excitation-calculation title, the functional, `n singlet a excitation`
//! blocks, the `atomic coordinates` table in bohr.

use super::text::{
    Builder, Lines, element_from_charge, element_from_label, int, multiplicity_word, num,
    num_after, read_table, state, symmetry,
};

pub(super) fn parse(lines: &Lines, b: &mut Builder) {
    let mut kind: Option<String> = None;
    let mut functional: Option<String> = None;
    // (number, spin, symmetry, label) of the state whose energy is expected next.
    let mut pending: Option<(usize, Option<u8>, String, String)> = None;
    let mut want_length = false;
    let mut i = 0;
    while i < lines.len() {
        let line = lines.get(i);
        let t = line.trim();
        if t.contains(": TURBOMOLE") || t.starts_with("TURBOMOLE rev.") {
            b.job_start();
            pending = None;
            if let Some(v) = super::text::tok_after(t, "rev.") {
                b.version(v.trim_start_matches('V'));
            }
        } else if t.starts_with("atomic coordinates") && t.contains("charge") {
            let (atoms, end) = read_table(lines, i + 1, 0, |toks| {
                if toks.len() < 5 {
                    return None;
                }
                let xyz = [num(toks[0])?, num(toks[1])?, num(toks[2])?];
                let z = num(toks[4])
                    .and_then(element_from_charge)
                    .or_else(|| element_from_label(toks[3]))?;
                Some((z, xyz))
            });
            b.set_geometry(super::text::geometry(&atoms, super::BOHR_ANGSTROM));
            i = end.max(i + 1);
            continue;
        } else if t.ends_with("EXCITATION-CALCULATION") {
            kind = Some(t.to_string());
            set_method(b, &kind, &functional);
        } else if t == "density functional" {
            if let Some(f) = (i + 1..i + 4)
                .map(|j| lines.get(j).trim())
                .find(|l| !l.is_empty() && !l.starts_with('-'))
            {
                functional = Some(f.to_string());
                set_method(b, &kind, &functional);
            }
        } else if t.ends_with(" excitation") && t.split_whitespace().next().and_then(int).is_some()
        {
            let words: Vec<&str> = t.split_whitespace().collect();
            let n = words.first().and_then(|w| int(w)).unwrap_or(0);
            let middle = &words[1..words.len() - 1];
            let (mult, sym) = match middle {
                [m, rest @ ..] if multiplicity_word(m).is_some() => {
                    (multiplicity_word(m), rest.join(" "))
                }
                _ => (None, middle.join(" ")),
            };
            pending = Some((n, mult, sym, middle.join(" ")));
        } else if let Some(e) = t
            .strip_prefix("Excitation energy / eV:")
            .and_then(|r| num(r.trim()))
        {
            if let Some((n, mult, sym, label)) = pending.take() {
                b.push_keyed(
                    format!("{n}/{mult:?}/{sym}"),
                    state(mult, symmetry(&sym), e, None, label),
                );
            }
        } else if t.starts_with("Oscillator strength") {
            want_length = true;
        } else if t.starts_with("Rotatory strength") {
            want_length = false;
        } else if want_length && t.starts_with("length representation:") {
            want_length = false;
            if let (Some(f), Some(s)) = (num_after(t, ":"), b.last_state()) {
                s.osc_strength = Some(f);
            }
        } else if t.contains(": all done") {
            b.terminated();
        }
        i += 1;
    }
}

fn set_method(b: &mut Builder, kind: &Option<String>, functional: &Option<String>) {
    let parts: Vec<&str> = [functional, kind]
        .iter()
        .filter_map(|p| p.as_deref())
        .collect();
    b.method(&parts.join(", "));
}
