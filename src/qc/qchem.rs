//! Q-Chem: `$rem` method and basis, `… Excitation Energies` sections, `Standard Nuclear
//! Orientation` in Å.

use super::text::{
    Builder, Lines, element_from_label, int, last_xyz, multiplicity_from_s2, multiplicity_word,
    num_after, read_table, state, tok_after,
};

pub(super) fn parse(lines: &Lines, b: &mut Builder) {
    let mut functional: Option<String> = None;
    let mut basis: Option<String> = None;
    let mut title: Option<String> = None;
    let mut in_rem = false;
    // A state block is open from its `Excited state` line to the next blank line.
    let mut open = false;
    let mut i = 0;
    while i < lines.len() {
        let line = lines.get(i);
        let t = line.trim();
        if t.contains("Welcome to Q-Chem") || t.starts_with("User input:") {
            b.job_start();
            functional = None;
            basis = None;
            title = None;
        } else if let Some(v) = t
            .strip_prefix("Q-Chem ")
            .filter(|v| v.starts_with(|c: char| c.is_ascii_digit()) && v.contains(" for "))
        {
            b.version(v.split_whitespace().next().unwrap_or(v));
        } else if t.eq_ignore_ascii_case("$rem") {
            in_rem = true;
        } else if in_rem && t.eq_ignore_ascii_case("$end") {
            in_rem = false;
        } else if in_rem {
            let mut kv = t.splitn(2, |c: char| c == '=' || c.is_whitespace());
            let key = kv.next().unwrap_or("").trim().to_ascii_lowercase();
            let val = kv
                .next()
                .unwrap_or("")
                .trim()
                .trim_start_matches('=')
                .trim();
            match key.as_str() {
                "method" | "exchange" if functional.is_none() => {
                    functional = Some(val.to_string());
                }
                "basis" => basis = Some(val.to_string()),
                _ => {}
            }
            set_method(b, &functional, &basis, &title);
        } else if let Some(head) = t.strip_suffix("Excitation Energies") {
            title = Some(head.trim().to_string());
            set_method(b, &functional, &basis, &title);
        } else if t.starts_with("Standard Nuclear Orientation") {
            let to_angstrom = if t.contains("Bohr") {
                super::BOHR_ANGSTROM
            } else {
                1.0
            };
            let (atoms, end) = read_table(lines, i + 1, 3, |toks| {
                if toks.len() != 5 {
                    return None;
                }
                int(toks[0])?;
                Some((element_from_label(toks[1])?, last_xyz(toks)?))
            });
            b.set_geometry(super::text::geometry(&atoms, to_angstrom));
            i = end;
            continue;
        } else if t.starts_with("Excited state") && t.contains("excitation energy") {
            open = false;
            let n = t.split_whitespace().nth(2).and_then(int);
            match (n, num_after(t, "=")) {
                (Some(n), Some(e)) => {
                    b.push_keyed(n.to_string(), state(None, None, e, None, ""));
                    open = true;
                }
                _ => b.bad(i, "`Excited state n: excitation energy (eV) = E`"),
            }
        } else if open && t.is_empty() {
            open = false;
        } else if open && let Some(s) = b.last_state() {
            if let Some(m) = tok_after(t, "Multiplicity:") {
                s.multiplicity = multiplicity_word(m);
                s.label = m.to_string();
            } else if let Some(v) = t.strip_prefix("<S**2>").and_then(|r| num_after(r, ":")) {
                if s.multiplicity.is_none() {
                    s.multiplicity = multiplicity_from_s2(v);
                    s.label = format!("<S**2> = {v}");
                }
            } else if let Some(f) = t.strip_prefix("Strength").and_then(|r| num_after(r, ":")) {
                s.osc_strength = Some(f);
            }
        } else if t.contains("Thank you very much for using Q-Chem") {
            b.terminated();
        }
        i += 1;
    }
}

fn set_method(
    b: &mut Builder,
    functional: &Option<String>,
    basis: &Option<String>,
    title: &Option<String>,
) {
    let mut m = String::new();
    if let Some(f) = functional {
        m.push_str(f);
    }
    if let Some(bs) = basis {
        m.push('/');
        m.push_str(bs);
    }
    if let Some(t) = title {
        m.push_str(&format!(" ({t})"));
    }
    b.method(&m);
}
