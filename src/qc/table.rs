//! The neutral results table: excited-state results from any source (a program without a reader,
//! the literature, the spectrometer) in one CSV layout.
//!
//! # Layout
//!
//! A header row, then one result per row. Column names are matched case-insensitively and in any
//! order; `candidate`, `kind` and `energy_ev` are required, the others optional. Lines starting
//! with `#` are comments.
//!
//! | column | meaning |
//! |---|---|
//! | `candidate` | candidate id or SMILES |
//! | `kind` | what the energy is, one of the [`ResultKind`] names below |
//! | `method` | how it was obtained (`TD-B3LYP/def2-SVP`, `PL spectrum`, …), free text |
//! | `conditions` | phase, host, solvent, temperature, free text (`toluene, 298 K`) |
//! | `state_label` | `S1`, `T1`, `Singlet-Bu`, free text |
//! | `multiplicity` | 1, 3, … or `singlet`/`triplet`; empty if unknown |
//! | `energy_ev` | energy in eV (for the ΔEST kinds: the gap S1 − T1) |
//! | `osc_strength` | oscillator strength, empty if unknown |
//!
//! `kind` names: `vertical_absorption`, `vertical_emission`, `adiabatic`, `zero_zero`,
//! `delta_est` (computed S1 − T1), `measured_absorption_peak`, `measured_pl_peak`,
//! `measured_pl_onset`, `measured_fluorescence_onset_77k`, `measured_phosphorescence_onset_77k`,
//! `measured_delta_est_77k`, `measured_delta_est_rt`.
//!
//! ```text
//! candidate,kind,method,conditions,state_label,multiplicity,energy_ev,osc_strength
//! N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21,vertical_absorption,TD-B3LYP/def2-SVP,gas,S1,1,3.41,0.12
//! N#Cc1ccc(cc1)-n1c2ccccc2c2ccccc21,measured_delta_est_77k,fluorescence/phosphorescence onsets,"toluene, 77 K",,,0.31,
//! ```
//!
//! A row that cannot be read (unknown kind, energy not a number, …) is reported as an error
//! diagnostic with its line and skipped; the others are kept.

use std::path::Path;

use serde::{Deserialize, Serialize};

use super::{Diagnostic, QcError, Severity};

/// The columns of the table, in the order the writer uses.
pub const COLUMNS: [&str; 8] = [
    "candidate",
    "kind",
    "method",
    "conditions",
    "state_label",
    "multiplicity",
    "energy_ev",
    "osc_strength",
];

/// What a row's energy is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ResultKind {
    /// Computed vertical excitation at the ground-state geometry.
    VerticalAbsorption,
    /// Computed vertical emission at the excited-state geometry.
    VerticalEmission,
    /// Computed adiabatic energy (minimum to minimum).
    Adiabatic,
    /// Computed 0–0 energy (adiabatic with zero-point corrections).
    ZeroZero,
    /// Computed singlet–triplet gap S1 − T1.
    DeltaEst,
    /// Measured absorption band maximum.
    MeasuredAbsorptionPeak,
    /// Measured photoluminescence maximum.
    MeasuredPlPeak,
    /// Measured photoluminescence onset (high-energy edge).
    MeasuredPlOnset,
    /// Measured fluorescence onset at 77 K.
    MeasuredFluorescenceOnset77k,
    /// Measured phosphorescence onset at 77 K.
    MeasuredPhosphorescenceOnset77k,
    /// Measured ΔEST from 77 K fluorescence and phosphorescence onsets.
    MeasuredDeltaEst77k,
    /// Measured ΔEST at room temperature (e.g. from delayed-fluorescence kinetics).
    MeasuredDeltaEstRt,
}

impl ResultKind {
    /// Every kind, in documentation order.
    pub const ALL: [ResultKind; 12] = [
        ResultKind::VerticalAbsorption,
        ResultKind::VerticalEmission,
        ResultKind::Adiabatic,
        ResultKind::ZeroZero,
        ResultKind::DeltaEst,
        ResultKind::MeasuredAbsorptionPeak,
        ResultKind::MeasuredPlPeak,
        ResultKind::MeasuredPlOnset,
        ResultKind::MeasuredFluorescenceOnset77k,
        ResultKind::MeasuredPhosphorescenceOnset77k,
        ResultKind::MeasuredDeltaEst77k,
        ResultKind::MeasuredDeltaEstRt,
    ];

    /// The name used in the `kind` column.
    pub fn name(self) -> &'static str {
        match self {
            ResultKind::VerticalAbsorption => "vertical_absorption",
            ResultKind::VerticalEmission => "vertical_emission",
            ResultKind::Adiabatic => "adiabatic",
            ResultKind::ZeroZero => "zero_zero",
            ResultKind::DeltaEst => "delta_est",
            ResultKind::MeasuredAbsorptionPeak => "measured_absorption_peak",
            ResultKind::MeasuredPlPeak => "measured_pl_peak",
            ResultKind::MeasuredPlOnset => "measured_pl_onset",
            ResultKind::MeasuredFluorescenceOnset77k => "measured_fluorescence_onset_77k",
            ResultKind::MeasuredPhosphorescenceOnset77k => "measured_phosphorescence_onset_77k",
            ResultKind::MeasuredDeltaEst77k => "measured_delta_est_77k",
            ResultKind::MeasuredDeltaEstRt => "measured_delta_est_rt",
        }
    }

    /// The kind named `s` (case-insensitive).
    pub fn from_name(s: &str) -> Option<ResultKind> {
        let s = s.trim();
        Self::ALL
            .into_iter()
            .find(|k| k.name().eq_ignore_ascii_case(s))
    }

    /// Whether the energy is a gap rather than a state energy.
    pub fn is_gap(self) -> bool {
        matches!(
            self,
            ResultKind::DeltaEst | ResultKind::MeasuredDeltaEst77k | ResultKind::MeasuredDeltaEstRt
        )
    }
}

/// One row of the table.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TableRow {
    /// 1-based line of the row in the file.
    pub line: usize,
    pub candidate: String,
    pub kind: ResultKind,
    pub method: Option<String>,
    pub conditions: Option<String>,
    pub state_label: Option<String>,
    pub multiplicity: Option<u8>,
    pub energy_ev: f64,
    pub osc_strength: Option<f64>,
}

/// Read a results table from disk.
pub fn read_table_path(
    path: impl AsRef<Path>,
) -> Result<(Vec<TableRow>, Vec<Diagnostic>), QcError> {
    let (name, text) = super::read_lossy(path.as_ref())?;
    read_table_str(&text, &name)
}

/// Read a results table from text; `name` is used in errors only. A missing header or a missing
/// required column is an error; bad rows are diagnostics.
pub fn read_table_str(text: &str, name: &str) -> Result<(Vec<TableRow>, Vec<Diagnostic>), QcError> {
    let mut rdr = csv::ReaderBuilder::new()
        .flexible(true)
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .from_reader(text.as_bytes());
    let malformed = |line: usize, expected: String| QcError::Malformed {
        file: name.to_string(),
        line,
        expected,
    };
    let headers = rdr
        .headers()
        .map_err(|e| malformed(1, format!("a CSV header row ({e})")))?
        .clone();
    let col = |c: &str| headers.iter().position(|h| h.eq_ignore_ascii_case(c));
    let mut diags = Vec::new();
    let mut idx = [None; 8];
    for (k, c) in COLUMNS.iter().enumerate() {
        idx[k] = col(c);
    }
    for required in [0, 1, 6] {
        if idx[required].is_none() {
            return Err(malformed(
                1,
                format!(
                    "a header with the column `{}` (columns: {})",
                    COLUMNS[required],
                    COLUMNS.join(",")
                ),
            ));
        }
    }
    for h in headers.iter() {
        if !COLUMNS.iter().any(|c| c.eq_ignore_ascii_case(h)) {
            diags.push(Diagnostic {
                severity: Severity::Info,
                line: Some(1),
                message: format!("unknown column `{h}` ignored"),
            });
        }
    }
    let mut rows = Vec::new();
    for rec in rdr.records() {
        let rec = match rec {
            Ok(r) => r,
            Err(e) => {
                diags.push(Diagnostic {
                    severity: Severity::Error,
                    line: e.position().map(|p| p.line() as usize),
                    message: format!("unreadable CSV row ({e}); skipped"),
                });
                continue;
            }
        };
        let line = rec.position().map(|p| p.line() as usize).unwrap_or(0);
        let field = |k: usize| {
            idx[k]
                .and_then(|c| rec.get(c))
                .filter(|s| !s.is_empty())
                .map(str::to_string)
        };
        match parse_row(line, &field) {
            Ok(r) => rows.push(r),
            Err(msg) => diags.push(Diagnostic {
                severity: Severity::Error,
                line: Some(line),
                message: format!("{msg}; row skipped"),
            }),
        }
    }
    Ok((rows, diags))
}

fn parse_row(line: usize, field: &dyn Fn(usize) -> Option<String>) -> Result<TableRow, String> {
    let candidate = field(0).ok_or("expected a candidate id or SMILES")?;
    let kind_s = field(1).ok_or("expected a kind")?;
    let kind = ResultKind::from_name(&kind_s).ok_or_else(|| {
        format!(
            "unknown kind `{kind_s}` (expected one of: {})",
            ResultKind::ALL.map(|k| k.name()).join(", ")
        )
    })?;
    let energy_s = field(6).ok_or("expected energy_ev")?;
    let energy_ev = energy_s
        .parse::<f64>()
        .ok()
        .filter(|e| e.is_finite())
        .ok_or_else(|| format!("expected energy_ev as a number in eV, found `{energy_s}`"))?;
    if !kind.is_gap() && energy_ev <= 0.0 {
        return Err(format!("expected a positive energy_ev, found {energy_ev}"));
    }
    let multiplicity = match field(5) {
        None => None,
        Some(m) => Some(
            super::text::multiplicity_word(&m)
                .or_else(|| m.parse::<u8>().ok().filter(|v| (1..=9).contains(v)))
                .ok_or_else(|| {
                    format!("expected multiplicity 1, 3, … or singlet/triplet, found `{m}`")
                })?,
        ),
    };
    let osc_strength = match field(7) {
        None => None,
        Some(f) => Some(
            f.parse::<f64>()
                .ok()
                .filter(|v| v.is_finite() && *v >= 0.0)
                .ok_or_else(|| format!("expected osc_strength ≥ 0, found `{f}`"))?,
        ),
    };
    Ok(TableRow {
        line,
        candidate,
        kind,
        method: field(2),
        conditions: field(3),
        state_label: field(4),
        multiplicity,
        energy_ev,
        osc_strength,
    })
}
