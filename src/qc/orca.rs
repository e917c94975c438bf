//! ORCA: `!` keyword lines, TDA/RPA flag, `EXCITED STATES` blocks, the electric-dipole absorption
//! spectrum table, Cartesian coordinates in Å.

use super::CM1_PER_EV;
use super::text::{
    Builder, Lines, element_from_label, int, last_xyz, multiplicity_from_s2, num, num_after,
    num_before, read_table, state, tok_after,
};

/// Two printouts of one energy agree to the printed 0.1 cm⁻¹; allow rounding on both sides.
const CM_TOLERANCE: f64 = 1.0;

pub(super) fn parse(lines: &Lines, b: &mut Builder) {
    let mut keywords: Vec<String> = Vec::new();
    let mut approx: Option<&str> = None;
    // Spin of the current EXCITED STATES block (None: unrestricted or not stated).
    let mut block: Option<Option<u8>> = None;
    let mut i = 0;
    while i < lines.len() {
        let line = lines.get(i);
        let t = line.trim();
        if t.contains("* O   R   C   A *") || (t.contains("JOB NUMBER") && t.contains("$$$")) {
            b.job_start();
            keywords.clear();
            approx = None;
            block = None;
        } else if let Some(v) = tok_after(t, "Program Version") {
            b.version(v);
        } else if let Some(k) = t
            .split_once('>')
            .filter(|(h, _)| h.starts_with('|'))
            .and_then(|(_, k)| k.trim().strip_prefix('!'))
        {
            keywords.push(k.trim().to_string());
            set_method(b, &keywords, approx);
        } else if t.starts_with("Tamm-Dancoff approximation") {
            approx = Some(if t.contains("operative") {
                "TDA"
            } else {
                "RPA"
            });
            set_method(b, &keywords, approx);
        } else if t == "CARTESIAN COORDINATES (ANGSTROEM)" {
            let (atoms, end) = read_table(lines, i + 1, 2, |toks| {
                if toks.len() != 4 {
                    return None;
                }
                Some((element_from_label(toks[0])?, last_xyz(toks)?))
            });
            b.set_geometry(super::text::geometry(&atoms, 1.0));
            i = end;
            continue;
        } else if t.contains("EXCITED STATES") && !t.contains("SOC") && !t.starts_with('*') {
            block = Some(if t.contains("(SINGLETS)") {
                Some(1)
            } else if t.contains("(TRIPLETS)") {
                Some(3)
            } else {
                None
            });
        } else if let (Some(spin), true) = (block, t.starts_with("STATE") && t.contains("E=")) {
            read_state(t, i, spin, b);
        } else if t.starts_with("Symmetry:") && block.is_some() {
            if let (Some(sym), Some(s)) = (tok_after(t, "Symmetry:"), b.last_state()) {
                s.symmetry = Some(sym.to_string());
                s.label = format!("{}-{sym}", s.label);
            }
        } else if t.contains("ABSORPTION SPECTRUM VIA TRANSITION ELECTRIC DIPOLE MOMENTS")
            && !t.contains("SOC")
            && !lines.get(i.wrapping_sub(1)).contains("SOC")
        {
            block = None;
            i = read_spectrum(lines, i + 1, b);
            continue;
        } else if t.contains("ORCA TERMINATED NORMALLY") {
            b.terminated();
        }
        i += 1;
    }
}

fn set_method(b: &mut Builder, keywords: &[String], approx: Option<&str>) {
    let mut m = keywords.join(" ");
    if let Some(a) = approx {
        m.push_str(&format!(" ({a})"));
    }
    b.method(&m);
}

/// `STATE  1:  E=   0.196682 au      5.352 eV    43166.7 cm**-1 <S**2> =   0.000000 [Mult 1]`
fn read_state(t: &str, i: usize, spin: Option<u8>, b: &mut Builder) {
    let Some(n) = t.split_whitespace().nth(1).and_then(int) else {
        return b.bad(i, "`STATE n:` with a state number");
    };
    let energy = num_before(t, "cm**-1")
        .map(|cm| cm / CM1_PER_EV)
        .or_else(|| num_before(t, "eV"));
    let Some(energy) = energy else {
        return b.bad(i, "an excitation energy in cm**-1 or eV");
    };
    let multiplicity = num_after(t, "Mult")
        .and_then(super::text::multiplicity_rounded)
        .or(spin)
        .or_else(|| num_after(t, "<S**2> =").and_then(multiplicity_from_s2));
    let label = match multiplicity {
        Some(1) => "Singlet".to_string(),
        Some(3) => "Triplet".to_string(),
        Some(m) => format!("mult {m}"),
        None => format!("STATE {n}"),
    };
    b.push_keyed(
        format!("{n}/{spin:?}"),
        state(multiplicity, None, energy, None, label),
    );
}

/// The electric-dipole absorption table: rows matched to states by energy. ORCA ≤ 5 rows are
/// `n  cm-1  nm  fosc ...` (or `spin forbidden`); ORCA 6 rows are `0-1A -> 1-1A  eV  cm-1  nm
/// fosc ...`. Spin-forbidden rows and triplets left without a row get f = 0 (no spin–orbit
/// coupling in this printout). Returns the index after the table.
fn read_spectrum(lines: &Lines, start: usize, b: &mut Builder) -> usize {
    let (rows, end) = read_table(lines, start, 6, |toks| {
        if toks.get(1) == Some(&"->") {
            // ORCA 6: `0-1A  ->  1-3A  eV  cm-1  nm  fosc ...`; the digit after `-` is the spin.
            let cm = num(toks.get(4)?)?;
            let mult = toks
                .get(2)
                .and_then(|l| l.split_once('-'))
                .and_then(|(_, m)| m.chars().next())
                .and_then(|c| c.to_digit(10))
                .map(|d| d as u8);
            Some((cm, toks.get(6).and_then(|f| num(f)), mult))
        } else if toks.len() >= 4 {
            int(toks[0])?;
            let cm = num(toks[1])?;
            Some(if toks[3] == "spin" {
                (cm, Some(0.0), Some(3))
            } else {
                (cm, num(toks[3]), None)
            })
        } else {
            None
        }
    });
    if rows.is_empty() {
        return end;
    }
    let states = &mut b.cur().states;
    for (cm, f, mult) in rows {
        let Some(f) = f else { continue };
        if let Some(s) = states.iter_mut().find(|s| {
            s.osc_strength.is_none()
                && (s.energy_ev * CM1_PER_EV - cm).abs() < CM_TOLERANCE
                && (mult.is_none() || s.multiplicity.is_none() || s.multiplicity == mult)
        }) {
            s.osc_strength = Some(f);
        }
    }
    for s in states.iter_mut() {
        if s.multiplicity == Some(3) && s.osc_strength.is_none() {
            s.osc_strength = Some(0.0);
        }
    }
    end
}
