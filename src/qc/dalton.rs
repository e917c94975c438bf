//! DALTON: the echoed `.mol` input for the geometry, linear-response excited states symmetry by
//! symmetry, oscillator strengths summed over dipole components.

use super::text::{
    Builder, Lines, element_from_charge, element_from_label, last_xyz, num, num_after, state,
    symmetry, tok_after,
};
use super::{BOHR_ANGSTROM, HARTREE_EV, Severity};

pub(super) fn parse(lines: &Lines, b: &mut Builder) {
    let mut triplet = false;
    let mut sym = String::new();
    let mut any_osc = false;
    let mut parts: Vec<String> = Vec::new();
    // Number of the state whose `@ Excitation energy` line is expected next.
    let mut pending: Option<usize> = None;
    let mut i = 0;
    while i < lines.len() {
        let line = lines.get(i);
        let t = line.trim();
        if let Some(v) = super::text::after(t, "This is output from DALTON") {
            fill_forbidden(b, any_osc);
            b.job_start();
            any_osc = false;
            parts.clear();
            b.version(v.split_whitespace().next().unwrap_or(v));
        } else if t.to_ascii_lowercase().starts_with("atomtypes=") {
            i = read_mol(lines, i, b);
            continue;
        } else if let Some(f) = super::text::after(t, "This is a DFT calculation of type:") {
            push_part(&mut parts, format!("DFT {}", f.trim()), b);
        } else if let Some(bs) = t.strip_prefix("Basis set used is") {
            let name = bs.split('"').nth(1).unwrap_or(bs).trim();
            push_part(&mut parts, name.to_string(), b);
        } else if t.starts_with("Operator symmetry =") && t.contains("triplet =") {
            triplet = tok_after(t, "triplet =").is_some_and(|v| v.starts_with('T'));
        } else if let Some(rest) = t.strip_prefix("@ Excited state no:") {
            let n = rest.split_whitespace().next().and_then(super::text::int);
            sym = rest
                .split_once('(')
                .and_then(|(_, s)| s.split_once(')'))
                .map(|(s, _)| s.trim().to_string())
                .unwrap_or_default();
            pending = n;
            if n.is_none() {
                b.bad(i, "`@ Excited state no: n in symmetry s ( Sym )`");
            }
        } else if let (Some(n), Some(au)) = (
            pending,
            t.strip_prefix("@ Excitation energy")
                .and_then(|r| num_after(r, ":")),
        ) {
            pending = None;
            // The next line gives the energy in eV; the hartree value is the fallback.
            let next = lines.get(i + 1);
            let toks: Vec<&str> = next.split_whitespace().collect();
            let ev = match toks.as_slice() {
                ["@", v, unit, ..] if unit.starts_with("eV") => num(v),
                _ => None,
            }
            .unwrap_or(au * HARTREE_EV);
            let mult = if triplet { 3 } else { 1 };
            let label = format!("{}-{sym}", if triplet { "Triplet" } else { "Singlet" });
            b.push_keyed(
                format!("{n}/{mult}/{sym}"),
                state(Some(mult), symmetry(&sym), ev, None, label),
            );
        } else if let Some(f) = t
            .strip_prefix("@ Oscillator strength (LENGTH)")
            .and_then(|r| num_after(r, ":"))
        {
            any_osc = true;
            if let Some(s) = b.last_state() {
                s.osc_strength = Some(s.osc_strength.unwrap_or(0.0) + f);
            }
        } else if t.starts_with(">>>> Total CPU  time used in DALTON") {
            b.terminated();
        }
        i += 1;
    }
    fill_forbidden(b, any_osc);
}

/// States of symmetries with no dipole component have no oscillator-strength line: f = 0 by
/// symmetry, when the run computed dipole residues at all.
fn fill_forbidden(b: &mut Builder, any_osc: bool) {
    if any_osc {
        for s in b.cur().states.iter_mut() {
            s.osc_strength.get_or_insert(0.0);
        }
    }
}

fn push_part(parts: &mut Vec<String>, p: String, b: &mut Builder) {
    if !parts.contains(&p) {
        parts.push(p);
        b.method(&parts.join(", "));
    }
}

/// The `.mol` input echoed in the output: `Atomtypes=6 Angstrom`, then per type `Charge=6.0
/// Atoms=6` and that many `label x y z` lines. Coordinates in Å when `Angstrom` is given on the
/// `Atomtypes` line, else bohr. Returns the index after the last atom line read.
fn read_mol(lines: &Lines, start: usize, b: &mut Builder) -> usize {
    let head = lines.get(start);
    let lower = head.to_ascii_lowercase();
    let to_angstrom = if lower.contains("angstrom") {
        1.0
    } else {
        BOHR_ANGSTROM
    };
    let ntypes = lower
        .trim()
        .strip_prefix("atomtypes=")
        .and_then(|r| r.split_whitespace().next())
        .and_then(super::text::int)
        .unwrap_or(0);
    let mut atoms = Vec::new();
    let mut i = start + 1;
    for _ in 0..ntypes {
        let l = lines.get(i);
        let ll = l.to_ascii_lowercase();
        let charge = super::text::after(&ll, "charge=")
            .and_then(|r| r.split_whitespace().next())
            .and_then(num);
        let count = super::text::after(&ll, "atoms=")
            .and_then(|r| r.split_whitespace().next())
            .and_then(super::text::int);
        let (Some(charge), Some(count)) = (charge, count) else {
            b.diag(
                Severity::Warning,
                i,
                "expected `Charge=q Atoms=n` in the echoed .mol input; geometry not read",
            );
            return i;
        };
        i += 1;
        for _ in 0..count {
            let toks: Vec<&str> = lines.get(i).split_whitespace().collect();
            let z = element_from_charge(charge)
                .or_else(|| toks.first().and_then(|x| element_from_label(x)));
            match (z, (toks.len() >= 4).then(|| last_xyz(&toks[..4])).flatten()) {
                (Some(z), Some(xyz)) => atoms.push((z, xyz)),
                _ => {
                    b.diag(
                        Severity::Warning,
                        i,
                        "expected `label x y z` in the echoed .mol input; geometry not read",
                    );
                    return i;
                }
            }
            i += 1;
        }
    }
    b.set_geometry(super::text::geometry(&atoms, to_angstrom));
    i
}
