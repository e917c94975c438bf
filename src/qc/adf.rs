//! ADF: one calculation per `Amsterdam Density Functional` run, the `XC` input setting, the
//! `Final excitation energies` tables (per symmetry) or the `All … excitation energies` summary,
//! the `ATOMS` table.

use super::text::{
    Builder, Lines, element_from_label, int, last_xyz, num, read_table, state, symmetry, tok_after,
};

pub(super) fn parse(lines: &Lines, b: &mut Builder) {
    let mut spin: Option<u8> = None;
    let mut final_tables = false;
    let mut sym = String::new();
    // The input echo (with `XC`) comes before the run's banner.
    let mut xc: Option<String> = None;
    let mut i = 0;
    while i < lines.len() {
        let line = lines.get(i);
        let t = line.trim();
        if t.contains("Amsterdam Density Functional") {
            b.job_start();
            spin = None;
            final_tables = false;
            if let Some(x) = &xc {
                b.method(x);
            }
            if let Some(v) = tok_after(t, "(ADF)") {
                b.version(v);
            }
        } else if t.eq_ignore_ascii_case("XC") {
            let next = lines.get(i + 1).trim();
            if !next.is_empty() && !next.eq_ignore_ascii_case("end") {
                xc = Some(next.to_string());
                b.method(next);
            }
        } else if t == "ATOMS" && lines.get(i + 1).contains("X Y Z") {
            let header = format!("{} {}", lines.get(i + 1), lines.get(i + 2));
            let to_angstrom = if header.contains("Angstrom") {
                1.0
            } else {
                super::BOHR_ANGSTROM
            };
            let (atoms, end) = read_table(lines, i + 1, 4, |toks| {
                if toks.len() < 5 {
                    return None;
                }
                int(toks[0])?;
                Some((element_from_label(toks[1])?, last_xyz(&toks[..5])?))
            });
            b.set_geometry(super::text::geometry(&atoms, to_angstrom));
            i = end;
            continue;
        } else if let Some(kind) = t.strip_prefix("Type of excitations =") {
            spin = spin_of(kind);
        } else if t.contains("Final excitation energies") {
            final_tables = true;
        } else if final_tables && t.starts_with("Symmetry ") {
            sym = t["Symmetry ".len()..].trim().to_string();
        } else if final_tables && t.starts_with("no.") && t.contains("E/a.u.") {
            i = read_table_rows(lines, i + 1, spin, &sym, b);
            continue;
        } else if t.starts_with("All ") && t.ends_with("excitation energies") {
            // The summary over all symmetries replaces the per-symmetry tables of this spin.
            let s = spin_of(t).or(spin);
            b.cur().states.retain(|x| x.multiplicity != s);
            let header = lines.find(i + 1, 3, "E/eV").unwrap_or(i + 1);
            i = read_table_rows(lines, header + 1, s, "", b);
            continue;
        } else if t.ends_with("NORMAL TERMINATION") {
            b.terminated();
        }
        i += 1;
    }
}

fn spin_of(kind: &str) -> Option<u8> {
    if kind.contains("SINGLET-SINGLET") {
        Some(1)
    } else if kind.contains("SINGLET-TRIPLET") {
        Some(3)
    } else {
        None
    }
}

/// Rows `n  E(a.u.)  E(eV)  f  dE` (per symmetry) or `n:  E(a.u.)  E(eV)  f  Sym` (summary).
fn read_table_rows(
    lines: &Lines,
    start: usize,
    spin: Option<u8>,
    sym: &str,
    b: &mut Builder,
) -> usize {
    let (rows, end) = read_table(lines, start, 2, |toks| {
        if toks.len() < 4 {
            return None;
        }
        let row_sym = toks
            .get(4)
            .filter(|x| num(x).is_none())
            .map(|x| x.to_string());
        Some((int(toks[0])?, num(toks[2])?, num(toks[3])?, row_sym))
    });
    let from = if sym.is_empty() { "all" } else { "sym" };
    for (n, e, f, row_sym) in rows {
        let row_sym = row_sym.as_deref().unwrap_or(sym);
        let clean = symmetry(row_sym);
        let s = clean.as_deref().unwrap_or("");
        let label = match spin {
            Some(1) => format!("Singlet-{s}"),
            Some(3) => format!("Triplet-{s}"),
            _ => s.to_string(),
        };
        b.push_keyed(
            format!("{n}/{spin:?}/{row_sym}/{from}"),
            state(spin, clean, e, Some(f), label),
        );
    }
    end
}
