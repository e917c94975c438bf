//! The line helpers every program reader shares: numbers in Fortran and C notation, elements
//! from labels or nuclear charges, coordinate tables, multiplicity words, and the [`Builder`]
//! that collects calculations, states, geometries and diagnostics.

use super::{
    Calculation, Diagnostic, ExcitedState, Geometry, Program, QcError, QcResult, ReadOptions,
    ReadOutcome, Severity,
};
use crate::chem::element;

/// The lines of a file, CRLF and LF alike; index `i` is line `i + 1`.
pub(crate) struct Lines<'a> {
    v: Vec<&'a str>,
}

impl<'a> Lines<'a> {
    pub(crate) fn new(text: &'a str) -> Self {
        let mut v: Vec<&str> = text
            .split('\n')
            .map(|l| l.strip_suffix('\r').unwrap_or(l))
            .collect();
        if v.last().is_some_and(|l| l.is_empty()) {
            v.pop();
        }
        Lines { v }
    }

    pub(crate) fn len(&self) -> usize {
        self.v.len()
    }

    /// Line `i` (0-based), or the empty string past the end.
    pub(crate) fn get(&self, i: usize) -> &'a str {
        self.v.get(i).copied().unwrap_or("")
    }

    /// First index `>= from` (and `< from + within`) whose line contains `key`.
    pub(crate) fn find(&self, from: usize, within: usize, key: &str) -> Option<usize> {
        let end = from.saturating_add(within).min(self.v.len());
        (from..end).find(|&i| self.v[i].contains(key))
    }
}

/// A number as programs print it: `1.5`, `-0.2E-01`, Fortran `0.1D+00`, with stray `,;()=`
/// trimmed. Non-finite values are rejected.
pub(crate) fn num(tok: &str) -> Option<f64> {
    let t = tok.trim_matches(|c: char| matches!(c, ',' | ';' | '(' | ')' | '=' | ':'));
    if t.is_empty() {
        return None;
    }
    let v = if t.contains(['D', 'd']) {
        t.replace(['D', 'd'], "E").parse::<f64>().ok()?
    } else {
        t.parse::<f64>().ok()?
    };
    v.is_finite().then_some(v)
}

/// A non-negative integer token, with stray `:,()` trimmed.
pub(crate) fn int(tok: &str) -> Option<usize> {
    tok.trim_matches(|c: char| matches!(c, ',' | ':' | '(' | ')' | '#'))
        .parse()
        .ok()
}

/// The text after the first occurrence of `key`.
pub(crate) fn after<'a>(s: &'a str, key: &str) -> Option<&'a str> {
    s.find(key).map(|p| &s[p + key.len()..])
}

/// The first whitespace-separated token after `key`.
pub(crate) fn tok_after<'a>(s: &'a str, key: &str) -> Option<&'a str> {
    after(s, key)?.split_whitespace().next()
}

/// The first number after `key`.
pub(crate) fn num_after(s: &str, key: &str) -> Option<f64> {
    num(tok_after(s, key)?)
}

/// The token just before the first token equal to `unit` (e.g. the value before `eV`).
pub(crate) fn num_before(s: &str, unit: &str) -> Option<f64> {
    let toks: Vec<&str> = s.split_whitespace().collect();
    let p = toks.iter().position(|t| *t == unit)?;
    num(toks.get(p.checked_sub(1)?)?)
}

/// Runs of whitespace collapsed to one space, ends trimmed.
pub(crate) fn collapse(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// Spin multiplicity from a word (`singlet`, `Triplet`, `TRIPLET`, …).
pub(crate) fn multiplicity_word(w: &str) -> Option<u8> {
    let w = w.to_ascii_lowercase();
    let w = w.trim_matches(|c: char| !c.is_ascii_alphabetic());
    match w {
        "singlet" | "singlets" => Some(1),
        "doublet" | "doublets" => Some(2),
        "triplet" | "triplets" => Some(3),
        "quartet" | "quartets" => Some(4),
        "quintet" | "quintets" => Some(5),
        _ => None,
    }
}

/// Spin multiplicity 2S+1 from ⟨S²⟩ = S(S+1), when it is within 0.1 of an integer (1–6):
/// 2S+1 = √(1 + 4⟨S²⟩).
pub(crate) fn multiplicity_from_s2(s2: f64) -> Option<u8> {
    multiplicity_rounded((1.0 + 4.0 * s2).max(0.0).sqrt())
}

/// A printed multiplicity estimate (Gaussian's `3.000-A`) rounded when within 0.1 of 1–6.
pub(crate) fn multiplicity_rounded(m: f64) -> Option<u8> {
    let r = m.round();
    ((m - r).abs() < 0.1 && (1.0..=6.0).contains(&r)).then_some(r as u8)
}

/// Atomic number from an atom label: `C`, `C12`, `Cl3`, lower-case `c`, `o` (Turbomole).
pub(crate) fn element_from_label(label: &str) -> Option<u8> {
    let letters: String = label
        .trim()
        .chars()
        .take_while(|c| c.is_ascii_alphabetic())
        .take(2)
        .collect();
    let mut cs = letters.chars();
    let first = cs.next()?.to_ascii_uppercase();
    let two = cs
        .next()
        .map(|c| format!("{first}{}", c.to_ascii_lowercase()));
    if let Some(z) = two.as_deref().and_then(element::from_symbol) {
        return Some(z);
    }
    element::from_symbol(&first.to_string()).filter(|&z| z > 0)
}

/// Atomic number from a printed nuclear charge (`6.0`), 1–118.
pub(crate) fn element_from_charge(q: f64) -> Option<u8> {
    let r = q.round();
    ((q - r).abs() < 0.01 && (1.0..=118.0).contains(&r)).then_some(r as u8)
}

/// One atom row: atomic number and coordinates in the file's unit.
pub(crate) type Atom = (u8, [f64; 3]);

/// The last three numbers of a row as coordinates.
pub(crate) fn last_xyz(toks: &[&str]) -> Option<[f64; 3]> {
    let n = toks.len();
    if n < 3 {
        return None;
    }
    Some([num(toks[n - 3])?, num(toks[n - 2])?, num(toks[n - 1])?])
}

/// Rows (whitespace-split lines) from `start` while `row` accepts them; returns what `row` made
/// of them and the index after the last.
pub(crate) fn read_rows<T>(
    lines: &Lines,
    start: usize,
    mut row: impl FnMut(&[&str]) -> Option<T>,
) -> (Vec<T>, usize) {
    let mut atoms = Vec::new();
    let mut i = start;
    while i < lines.len() {
        let toks: Vec<&str> = lines.get(i).split_whitespace().collect();
        match row(&toks) {
            Some(a) => atoms.push(a),
            None => break,
        }
        i += 1;
    }
    (atoms, i)
}

/// Like [`read_rows`], but first skips up to `skip` lines (titles, column headers, dashes) that
/// `row` does not accept. Every table of every reader (coordinates, states, spectra) is read with
/// it.
pub(crate) fn read_table<T>(
    lines: &Lines,
    start: usize,
    skip: usize,
    mut row: impl FnMut(&[&str]) -> Option<T>,
) -> (Vec<T>, usize) {
    for i in start..start.saturating_add(skip + 1).min(lines.len()) {
        let toks: Vec<&str> = lines.get(i).split_whitespace().collect();
        if row(&toks).is_some() {
            return read_rows(lines, i, row);
        }
    }
    (Vec::new(), start)
}

/// A geometry from atoms, coordinates scaled by `to_angstrom` (1 for Å, [`super::BOHR_ANGSTROM`]
/// for bohr); `None` for no atoms.
pub(crate) fn geometry(atoms: &[Atom], to_angstrom: f64) -> Option<Geometry> {
    if atoms.is_empty() {
        return None;
    }
    Some(Geometry {
        elements: atoms
            .iter()
            .map(|(z, _)| element::symbol(*z).to_string())
            .collect(),
        atomic_numbers: atoms.iter().map(|(z, _)| *z).collect(),
        coords_angstrom: atoms
            .iter()
            .map(|(_, c)| c.map(|x| x * to_angstrom))
            .collect(),
    })
}

/// A symmetry label cleaned for storage: ADF's `B.u` → `Bu`; unknown (`?Sym`) or empty → `None`.
pub(crate) fn symmetry(label: &str) -> Option<String> {
    let s: String = label.trim().chars().filter(|c| *c != '.').collect();
    (!s.is_empty() && !s.starts_with('?')).then_some(s)
}

/// A state before it is numbered.
pub(crate) fn state(
    multiplicity: Option<u8>,
    symmetry: Option<String>,
    energy_ev: f64,
    osc_strength: Option<f64>,
    label: impl Into<String>,
) -> ExcitedState {
    ExcitedState {
        index: 0,
        multiplicity,
        symmetry,
        energy_ev,
        osc_strength,
        label: label.into(),
    }
}

/// Collects what a reader finds, calculation by calculation.
pub(crate) struct Builder {
    program: Program,
    version: Option<String>,
    calcs: Vec<Calculation>,
    diags: Vec<Diagnostic>,
    terminated: bool,
    /// Keys (state number, spin, symmetry as the reader forms them) of the current printout.
    keys: Vec<String>,
}

impl Builder {
    pub(crate) fn new(program: Program) -> Self {
        Builder {
            program,
            version: None,
            calcs: Vec::new(),
            diags: Vec::new(),
            terminated: false,
            keys: Vec::new(),
        }
    }

    /// Record the version (the first one found wins).
    pub(crate) fn version(&mut self, v: &str) {
        let v = collapse(v);
        if self.version.is_none() && !v.is_empty() {
            self.version = Some(v);
        }
    }

    /// A new job or run starts here (banner, route line, `User input:`): a new calculation unless
    /// the current one is still empty; the termination flag is cleared.
    pub(crate) fn job_start(&mut self) {
        self.terminated = false;
        self.keys.clear();
        if self
            .calcs
            .last()
            .is_none_or(|c| !c.states.is_empty() || c.geometry.is_some() || c.method.is_some())
        {
            self.calcs.push(Calculation::default());
        }
    }

    /// The current calculation.
    pub(crate) fn cur(&mut self) -> &mut Calculation {
        if self.calcs.is_empty() {
            self.calcs.push(Calculation::default());
        }
        let n = self.calcs.len();
        &mut self.calcs[n - 1]
    }

    pub(crate) fn method(&mut self, m: &str) {
        let m = collapse(m);
        if !m.is_empty() {
            self.cur().method = Some(m);
        }
    }

    pub(crate) fn push_state(&mut self, s: ExcitedState) {
        self.cur().states.push(s);
    }

    /// Forget the current calculation's states (a later printout of the same states follows).
    pub(crate) fn clear_states(&mut self) {
        self.keys.clear();
        self.cur().states.clear();
    }

    /// Push a state numbered by the file; when the same key (number, spin, symmetry) was already
    /// pushed in this calculation, the file reprints its states (an optimisation step, TDA before
    /// RPA) and the later printout replaces the earlier one.
    pub(crate) fn push_keyed(&mut self, key: String, s: ExcitedState) {
        if self.keys.contains(&key) {
            self.clear_states();
        }
        self.keys.push(key);
        self.push_state(s);
    }

    /// The last state of the current calculation.
    pub(crate) fn last_state(&mut self) -> Option<&mut ExcitedState> {
        self.cur().states.last_mut()
    }

    pub(crate) fn set_geometry(&mut self, g: Option<Geometry>) {
        if let Some(g) = g {
            self.cur().geometry = Some(g);
        }
    }

    pub(crate) fn terminated(&mut self) {
        self.terminated = true;
    }

    pub(crate) fn diag(&mut self, severity: Severity, i: usize, message: impl Into<String>) {
        self.diags.push(Diagnostic {
            severity,
            line: Some(i + 1),
            message: message.into(),
        });
    }

    /// A state line that could not be read: an error diagnostic, the state is skipped.
    pub(crate) fn bad(&mut self, i: usize, expected: &str) {
        self.diag(Severity::Error, i, format!("expected {expected}; skipped"));
    }

    pub(crate) fn finish(mut self, name: &str, nlines: usize, options: ReadOptions) -> ReadOutcome {
        self.calcs
            .retain(|c| !c.states.is_empty() || c.geometry.is_some());
        for c in &mut self.calcs {
            for (k, s) in c.states.iter_mut().enumerate() {
                s.index = k + 1;
            }
        }
        if options.strict
            && let Some(d) = self.diags.iter().find(|d| d.severity == Severity::Error)
        {
            return Err(QcError::Malformed {
                file: name.to_string(),
                line: d.line.unwrap_or(0),
                expected: d.message.clone(),
            });
        }
        if self.calcs.iter().all(|c| c.states.is_empty()) {
            return Err(QcError::NoExcitedStates {
                file: name.to_string(),
                program: self.program,
                geometry: self
                    .calcs
                    .iter()
                    .rev()
                    .find_map(|c| c.geometry.clone())
                    .map(Box::new),
                truncated: !self.terminated,
            });
        }
        let partial = !self.terminated;
        if partial {
            self.diags.push(Diagnostic {
                severity: Severity::Warning,
                line: Some(nlines.max(1)),
                message: format!(
                    "the file ends before {}'s normal-termination line; results may be incomplete",
                    self.program
                ),
            });
        }
        let method = self.calcs.iter().find_map(|c| c.method.clone());
        Ok((
            QcResult {
                program: self.program,
                version: self.version,
                method,
                calculations: self.calcs,
                partial,
            },
            self.diags,
        ))
    }
}
