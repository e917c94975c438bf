//! NWChem: TDDFT `Root` lines with their oscillator strengths, `Output coordinates in
//! angstroms`.

use super::text::{
    Builder, Lines, element_from_charge, element_from_label, int, last_xyz, multiplicity_word, num,
    read_table, state, symmetry, tok_after,
};

pub(super) fn parse(lines: &Lines, b: &mut Builder) {
    let mut functional: Option<String> = None;
    let mut calc_type: Option<String> = None;
    let mut i = 0;
    while i < lines.len() {
        let line = lines.get(i);
        let t = line.trim();
        if t.contains("Northwest Computational Chemistry Package") {
            b.job_start();
            functional = None;
            calc_type = None;
            if let Some(v) = tok_after(t, "(NWChem)") {
                b.version(v);
            }
        } else if t.starts_with("Output coordinates in") {
            let to_angstrom = if t.contains("angstroms") {
                1.0
            } else {
                super::BOHR_ANGSTROM
            };
            let (atoms, end) = read_table(lines, i + 1, 3, |toks| {
                if toks.len() != 6 {
                    return None;
                }
                int(toks[0])?;
                let z = num(toks[2])
                    .and_then(element_from_charge)
                    .or_else(|| element_from_label(toks[1]))?;
                Some((z, last_xyz(toks)?))
            });
            b.set_geometry(super::text::geometry(&atoms, to_angstrom));
            i = end;
            continue;
        } else if let Some(f) = t.strip_suffix("Method XC Potential") {
            functional = Some(f.trim().to_string());
            set_method(b, &calc_type, &functional);
        } else if let Some(c) = t.strip_prefix("Calculation type :") {
            calc_type = Some(c.trim().to_string());
            set_method(b, &calc_type, &functional);
        } else if t.starts_with("Root ") && t.contains("a.u.") {
            read_root(t, i, b);
        } else if let Some(f) = t
            .strip_prefix("Total Oscillator Strength")
            .and_then(|r| num(r.trim()))
        {
            if let Some(s) = b.last_state() {
                s.osc_strength = Some(f);
            }
        } else if let Some(f) = t
            .strip_prefix("Dipole Oscillator Strength")
            .or_else(|| t.strip_prefix("Oscillator Strength"))
            .and_then(|r| num(r.trim()))
        {
            if let Some(s) = b.last_state()
                && s.osc_strength.is_none()
            {
                s.osc_strength = Some(f);
            }
        } else if t.starts_with("Total times") && t.contains("cpu:") {
            b.terminated();
        }
        i += 1;
    }
}

fn set_method(b: &mut Builder, calc_type: &Option<String>, functional: &Option<String>) {
    let parts: Vec<&str> = [calc_type, functional]
        .iter()
        .filter_map(|p| p.as_deref())
        .collect();
    b.method(&parts.join(" "));
}

/// `Root   1 singlet bu     0.196071264 a.u.     5.3354 eV`, older `( 5.3354 eV)`, unrestricted
/// `Root   1         a      0.29 a.u. ...`.
fn read_root(t: &str, i: usize, b: &mut Builder) {
    let toks: Vec<&str> = t.split_whitespace().collect();
    let Some(n) = toks.get(1).and_then(|x| int(x)) else {
        return b.bad(i, "`Root n` with a root number");
    };
    let Some(au) = toks.iter().position(|x| *x == "a.u.") else {
        return b.bad(i, "an energy in a.u.");
    };
    let energy = after_au(&toks[au + 1..]).or_else(|| {
        toks.get(au.wrapping_sub(1))
            .and_then(|x| num(x))
            .map(|h| h * super::HARTREE_EV)
    });
    let Some(energy) = energy else {
        return b.bad(i, "an excitation energy");
    };
    let words = toks.get(2..au.saturating_sub(1)).unwrap_or(&[]);
    let (multiplicity, sym) = match words {
        [m, rest @ ..] if multiplicity_word(m).is_some() => (multiplicity_word(m), rest.join(" ")),
        _ => (None, words.join(" ")),
    };
    b.push_keyed(
        format!("{n}/{multiplicity:?}"),
        state(multiplicity, symmetry(&sym), energy, None, words.join(" ")),
    );
}

/// The eV value after `a.u.`: `5.3354 eV` or `( 5.3354 eV)`.
fn after_au(toks: &[&str]) -> Option<f64> {
    toks.iter()
        .take_while(|x| !x.starts_with("eV"))
        .filter_map(|x| num(x))
        .next()
        .filter(|_| toks.iter().any(|x| x.starts_with("eV")))
}
