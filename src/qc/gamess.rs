//! GAMESS (US) and Firefly: `INPUT CARD>` method cards, TDDFT state blocks, the TDDFT summary
//! and the excitation-energy tables, coordinates in bohr or Å.

use super::CM1_PER_EV;
use super::text::{
    Builder, Lines, element_from_charge, element_from_label, int, last_xyz, num, num_after,
    read_table, state, symmetry,
};

pub(super) fn parse(lines: &Lines, b: &mut Builder) {
    let mut cards: Vec<String> = Vec::new();
    // Spin of the current `SINGLET/TRIPLET EXCITATIONS` section of detailed state blocks.
    let mut spin: Option<u8> = None;
    let mut detailed = false;
    let mut in_state = false;
    let mut i = 0;
    while i < lines.len() {
        let line = lines.get(i);
        let t = line.trim();
        if let Some(v) = super::text::after(t, "Firefly version").filter(|_| t.starts_with('*')) {
            b.job_start();
            reset(&mut cards, &mut spin, &mut detailed);
            b.version(v.split(',').next().unwrap_or(v));
        } else if let Some(v) =
            super::text::after(t, "GAMESS VERSION =").filter(|_| t.starts_with('*'))
        {
            b.job_start();
            reset(&mut cards, &mut spin, &mut detailed);
            b.version(v.trim_end_matches('*'));
        } else if let Some(card) = t.strip_prefix("INPUT CARD>") {
            let c = card.trim();
            let up = c.to_ascii_uppercase();
            if up.contains("DFTTYP")
                || up.contains("$TDDFT")
                || up.contains("$BASIS")
                || up.contains("CITYP")
                || up.contains("TDDFT=")
            {
                cards.push(c.to_string());
                b.method(&cards.join("; "));
            }
        } else if t.starts_with("ATOM") && t.contains("COORDINATES (BOHR)")
            || t.contains("COORDINATES OF ALL ATOMS ARE (ANGS)")
        {
            let to_angstrom = if t.contains("BOHR") {
                super::BOHR_ANGSTROM
            } else {
                1.0
            };
            let (atoms, end) = read_table(lines, i + 1, 3, |toks| {
                if toks.len() != 5 {
                    return None;
                }
                let z = num(toks[1])
                    .and_then(element_from_charge)
                    .or_else(|| element_from_label(toks[0]))?;
                Some((z, last_xyz(toks)?))
            });
            b.set_geometry(super::text::geometry(&atoms, to_angstrom));
            i = end;
            continue;
        } else if t == "SINGLET EXCITATIONS" || t == "TRIPLET EXCITATIONS" {
            spin = Some(if t.starts_with('S') { 1 } else { 3 });
        } else if t.starts_with("STATE #") && t.contains("ENERGY =") {
            in_state = false;
            let n = t.split_whitespace().nth(2).and_then(int);
            match (n, num_after(t, "ENERGY =")) {
                (Some(n), Some(e)) => {
                    detailed = true;
                    in_state = true;
                    let label = match spin {
                        Some(1) => "Singlet",
                        Some(3) => "Triplet",
                        _ => "",
                    };
                    b.push_keyed(format!("{n}/{spin:?}"), state(spin, None, e, None, label));
                }
                _ => b.bad(i, "`STATE # n  ENERGY = E EV`"),
            }
        } else if in_state && t.starts_with("OSCILLATOR STRENGTH") {
            if let (Some(f), Some(s)) = (num_after(t, "="), b.last_state()) {
                s.osc_strength = Some(f);
            }
        } else if in_state && t.starts_with("SYMMETRY OF STATE") {
            if let (Some(sym), Some(s)) = (super::text::tok_after(t, "="), b.last_state()) {
                s.symmetry = symmetry(sym);
                s.label = if s.label.is_empty() {
                    sym.to_string()
                } else {
                    format!("{}-{sym}", s.label)
                };
            }
        } else if t == "SUMMARY OF TDDFT RESULTS" {
            in_state = false;
            if !detailed {
                i = read_summary(lines, i + 1, b);
                continue;
            }
        } else if t.ends_with("EXCITATION ENERGIES")
            && lines.get(i + 1).contains("HARTREE")
            && !detailed
        {
            i = read_energy_table(lines, i + 2, b);
            continue;
        } else if t.starts_with("EXECUTION OF") && t.contains("TERMINATED NORMALLY") {
            b.terminated();
        }
        i += 1;
    }
}

fn reset(cards: &mut Vec<String>, spin: &mut Option<u8>, detailed: &mut bool) {
    cards.clear();
    *spin = None;
    *detailed = false;
}

/// `SUMMARY OF TDDFT RESULTS`: rows `n  SYM  E(hartree)  E(eV)  x y z  f`; row 0 is the ground
/// state. No spin is stated in this table.
fn read_summary(lines: &Lines, start: usize, b: &mut Builder) -> usize {
    let (rows, end) = read_table(lines, start, 3, |toks| match toks.len() {
        8 => Some(Some((
            int(toks[0])?,
            toks[1].to_string(),
            num(toks[3])?,
            num(toks[7])?,
        ))),
        4 if toks[0] == "0" => Some(None),
        _ => None,
    });
    for (n, sym, e, f) in rows.into_iter().flatten() {
        b.push_keyed(
            format!("{n}/summary"),
            state(None, symmetry(&sym), e, Some(f), sym),
        );
    }
    end
}

/// Firefly's `TDDFT EXCITATION ENERGIES` (and GAMESS CIS) table: `3BU  E(hartree)  E(eV)
/// kcal/mol  cm-1  nm  f`; the label's leading digit is the spin multiplicity. The energy is
/// taken from the cm⁻¹ column (most digits).
fn read_energy_table(lines: &Lines, start: usize, b: &mut Builder) -> usize {
    let (rows, end) = read_table(lines, start, 2, |toks| {
        if toks.len() < 6 {
            return None;
        }
        num(toks[1])?;
        Some((
            toks[0].to_string(),
            num(toks[4])?,
            toks.get(6).and_then(|f| num(f)),
        ))
    });
    for (n, (label, cm, f)) in rows.into_iter().enumerate() {
        let mut cs = label.chars();
        let mult = cs
            .next()
            .and_then(|c| c.to_digit(10))
            .map(|d| d as u8)
            .filter(|d| (1..=6).contains(d));
        let sym = if mult.is_some() { cs.as_str() } else { &label };
        b.push_keyed(
            format!("{}/table", n + 1),
            state(mult, symmetry(sym), cm / CM1_PER_EV, f, label.as_str()),
        );
    }
    end
}
