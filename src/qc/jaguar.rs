//! Jaguar: basis and SCF type, `Excited State` blocks, `… geometry:` tables.

use super::Severity;
use super::text::{
    Builder, Lines, element_from_label, int, last_xyz, multiplicity_word, num, num_after,
    num_before, read_table, state, tok_after,
};

pub(super) fn parse(lines: &Lines, b: &mut Builder) {
    let mut basis: Option<String> = None;
    let mut scf: Option<String> = None;
    let mut td = false;
    let mut ground_mult: Option<u8> = None;
    let mut mentions_triplet = false;
    let mut first_calc_state = 0;
    let mut i = 0;
    while i < lines.len() {
        let line = lines.get(i);
        let t = line.trim();
        if t.to_ascii_lowercase().contains("triplet") {
            mentions_triplet = true;
        }
        if let Some(v) = super::text::after(t, "Jaguar version") {
            infer_singlets(b, ground_mult, mentions_triplet, first_calc_state);
            b.job_start();
            (basis, scf, td, ground_mult) = (None, None, false, None);
            b.version(v.split(',').next().unwrap_or(v));
            first_calc_state = i;
        } else if let Some(v) = t.strip_prefix("basis set:") {
            basis = Some(v.trim().to_string());
            set_method(b, &scf, &basis, td);
        } else if let Some(v) = t.strip_prefix("SCF calculation type:") {
            scf = Some(v.trim().to_string());
            set_method(b, &scf, &basis, td);
        } else if t.starts_with("Electronic excitation energies will be calculated by") {
            td = true;
            set_method(b, &scf, &basis, td);
        } else if let Some(m) = t.strip_prefix("multiplicity:").and_then(|r| num(r.trim())) {
            ground_mult = super::text::multiplicity_rounded(m);
        } else if t == "geometry:" || t.ends_with(" geometry:") {
            let unit = lines.get(i + 1).to_ascii_lowercase();
            let to_angstrom = if unit.contains("bohr") {
                super::BOHR_ANGSTROM
            } else {
                1.0
            };
            let (atoms, end) = read_table(lines, i + 1, 3, |toks| {
                if toks.len() != 4 {
                    return None;
                }
                Some((element_from_label(toks[0])?, last_xyz(toks)?))
            });
            b.set_geometry(super::text::geometry(&atoms, to_angstrom));
            i = end.max(i + 1);
            continue;
        } else if t.starts_with("Excited State") && t.contains("eV") {
            let n = tok_after(t, "Excited State").and_then(int);
            match (n, num_before(t, "eV")) {
                (Some(n), Some(e)) => {
                    let mult = t.split_whitespace().find_map(multiplicity_word);
                    let label = match mult {
                        Some(1) => "Singlet",
                        Some(3) => "Triplet",
                        _ => "",
                    };
                    b.push_keyed(format!("{n}/{mult:?}"), state(mult, None, e, None, label));
                }
                _ => b.bad(i, "`Excited State n:  E eV`"),
            }
        } else if let Some(f) = t
            .strip_prefix("Oscillator strength")
            .and_then(|r| num_after(r, "f="))
        {
            if let Some(s) = b.last_state() {
                s.osc_strength = Some(f);
            }
        } else if t.starts_with("Job ") && t.contains(" completed on ") {
            b.terminated();
        }
        i += 1;
    }
    infer_singlets(b, ground_mult, mentions_triplet, first_calc_state);
}

/// Jaguar's state lines carry no spin. When the ground state is a singlet and the file never
/// mentions triplets, the states are the (default) singlets: say so in an Info diagnostic.
fn infer_singlets(b: &mut Builder, ground: Option<u8>, triplet: bool, line: usize) {
    let states = &mut b.cur().states;
    if ground != Some(1) || triplet || states.iter().all(|s| s.multiplicity.is_some()) {
        return;
    }
    for s in states.iter_mut().filter(|s| s.multiplicity.is_none()) {
        s.multiplicity = Some(1);
        s.label = "Singlet".to_string();
    }
    b.diag(
        Severity::Info,
        line,
        "Jaguar prints no spin on its excited states; singlets inferred (closed-shell ground \
         state, no triplet request in the file)",
    );
}

fn set_method(b: &mut Builder, scf: &Option<String>, basis: &Option<String>, td: bool) {
    let mut m = scf.clone().unwrap_or_default();
    if let Some(bs) = basis {
        m.push('/');
        m.push_str(bs);
    }
    if td {
        m.push_str(" TDDFT");
    }
    b.method(&m);
}
