//! Workflow files: what a campaign enumerates (and, as stages are added, estimates and ranks).
//!
//! ```toml
//! [campaign]
//! name = "blue-search"
//! store = "blue.sqlite"             # relative to this file
//! fragments = ["../fragments"]      # folders of *.toml, or files
//! stages = ["enumerate"]
//! chunk_size = 1024                 # tuples per transaction (and resume unit)
//!
//! [enumerate]
//! architectures = ["D-A", "D-B-A", "D-A-D", "A-D-A", "D-B-A-B-D", "Dn-A"]
//! max_mol_weight = 1000.0           # g/mol; common rule of thumb for vacuum deposition
//! max_heavy_atoms = 200
//! forbidden_pairs = [["phenothiazin-10-yl", "4-benzoylphenyl"]]
//! allowed_pairs = []                # when not empty, every donor–acceptor pair must be listed
//! max_candidates = 0                # stop after this many admitted tuples (0 = no limit)
//! sample = 0                        # keep a seeded random sample of this many (0 = all)
//! seed = 1
//! [enumerate.dn_a]
//! min = 2
//! max = 5
//! donors = "alike"                  # alike | mixed
//! [enumerate.donors]
//! include = []                      # empty = all
//! exclude = []
//! [enumerate.acceptors]
//! [enumerate.bridges]
//!
//!
//! [screen]                          # fast fragment tier (stage "screen", before "enumerate")
//! pass_fraction = 0.01              # build and estimate only the best 1 % of tuples
//! # model = "my-fast-tier.toml"     # fitted model (default: the shipped data/fast-tier.toml)
//! # trees = false                   # order by the screen score without its boosted trees:
//! #                                 # 90 % instead of 96 % of the π tier's top 100 kept at
//! #                                 # 10 % pass (held-out library)
//! # refine_all = true               # the trees refine every tuple, not only those whose
//! #                                 # ridge part reaches the model's gate (the top 12 % or
//! #                                 # so): slower, 97 % kept on the held-out library
//!
//! [estimate]                        # π-tier estimate of every candidate in the store
//! temperature_k = 300.0             # Boltzmann distribution over twists
//! # twist_deg = 60.0                # fix every link instead of the torsion model
//! scan_step_deg = 15.0              # torsion scan step (divides 180)
//! n_states = 6                      # states per multiplicity
//! # params = "my-ppp.toml"          # PPP parameter file (default: the shipped set)
//! [estimate.rates]                  # photophysics stored with each estimate (defaults shown;
//!                                   # the temperature is estimate.temperature_k)
//! refractive_index = 1.7
//! reorganisation_ev = 0.2
//! soc_ct_ct_cm = 0.05               # ⟨¹CT|H_SO|³CT⟩
//! soc_ct_le_cm = 0.5                # ⟨¹CT|H_SO|³LE⟩
//! soc_le_le_cm = 0.1
//! manifold_kt = 3.0                 # thermalised manifolds: states within 3 k_BT
//! k_nr_singlet = 0.0                # s⁻¹; 0 = efficiencies are upper bounds
//! k_nr_triplet = 0.0
//! charge_balance = 1.0
//! outcoupling = 0.2
//! [estimate.band]
//! stokes_shift_ev = 0.25
//! fwhm_ev = 0.40
//!
//! [ingest]                          # stage "ingest": QC outputs and results tables
//! paths = ["qc-results"]            # files or folders (recursive), relative to this file
//! kind = "vertical_absorption"      # what the program outputs' energies are
//! # conditions = "gas phase"
//!
//! [calibrate]                       # stage "calibrate": per kind, applied to every estimate
//! # kind = "vertical_absorption"    # default: every kind with matched results
//! coverage = 0.9                    # prediction-interval coverage
//!
//! [shortlist]                       # stage "shortlist" (every key optional)
//! use_calibration = true
//! [shortlist.rank]
//! p_min = 0.5                       # keep when P(pass all filters) ≥ this
//! confidence = 0.9                  # pessimistic bounds for ordering
//! [shortlist.rank.filters]
//! delta_est_max_ev = 0.3
//! f_min = 0.005
//! colour_target = "bt2020-blue"     # or "x,y"
//! colour_max_delta_uv = 0.08
//! mw_max = 1000.0
//! le3_minus_ct1_min_ev = -0.1
//! exclude_not_converged = true
//! [shortlist.diversity]
//! n_pick = 10
//! max_similarity = 0.6              # Tanimoto ceiling between picks
//! max_per_fragment = 3
//!
//! [report]                          # stage "report"
//! out_dir = "report"                # report.html, shortlist.csv/.json/.sdf
//! title = "Blue search"
//! # references = "known-emitters.csv"   # name,smiles[,measured_delta_est_ev,measured_pl_peak_nm]
//! ```
//!
//! Unknown keys are rejected with the line where they stand.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::error::CampaignError;
use crate::combine::{DnAMode, EnumerateParams, RoleFilter};
use crate::model::Architecture;

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawWorkflow {
    campaign: RawCampaign,
    #[serde(default)]
    enumerate: Option<RawEnumerate>,
    #[serde(default)]
    estimate: Option<RawEstimate>,
    #[serde(default)]
    screen: Option<RawScreen>,
    #[serde(default)]
    ingest: Option<RawIngest>,
    #[serde(default)]
    calibrate: Option<RawCalibrate>,
    #[serde(default)]
    shortlist: Option<super::shortlist::ShortlistSettings>,
    #[serde(default)]
    report: Option<super::report_stage::ReportSettings>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawIngest {
    paths: Vec<PathBuf>,
    #[serde(default = "default_kind")]
    kind: String,
    #[serde(default)]
    conditions: Option<String>,
}

fn default_kind() -> String {
    "vertical_absorption".into()
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCalibrate {
    #[serde(default)]
    kind: Option<String>,
    #[serde(default = "default_coverage")]
    coverage: f64,
}

fn default_coverage() -> f64 {
    0.9
}

/// Settings of the ingest stage, resolved (paths absolute).
#[derive(Debug, Clone, PartialEq)]
pub struct IngestStage {
    pub paths: Vec<PathBuf>,
    pub kind: crate::qc::table::ResultKind,
    pub conditions: Option<String>,
}

/// Settings of the calibrate stage.
#[derive(Debug, Clone, PartialEq)]
pub struct CalibrateStage {
    /// Only this kind (default: every kind with matched results).
    pub kind: Option<String>,
    pub params: crate::calibrate::CalibrateParams,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawScreen {
    #[serde(default = "default_pass_fraction")]
    pass_fraction: f64,
    #[serde(default)]
    model: Option<PathBuf>,
    #[serde(default = "default_true")]
    trees: bool,
    #[serde(default)]
    refine_all: bool,
}

fn default_true() -> bool {
    true
}

fn default_pass_fraction() -> f64 {
    0.01
}

/// Settings of the fast-tier screen, resolved. When the stage "screen" is listed, the
/// enumeration builds only the tuples the fast tier ranks in its best `pass_fraction` (by
/// log10 k_TADF), instead of all, the first N or a sample.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScreenStage {
    pub pass_fraction: f64,
    /// A fitted model file; None = the shipped `data/fast-tier.toml`.
    pub model: Option<PathBuf>,
    /// Add the screen score's boosted trees (default): on the held-out library 96 % of the
    /// π tier's top 100 kept at 10 % pass instead of 90 % (DEVELOPERS.md; the enumerator,
    /// at about 0.3 M/s, bounds the stage either way).
    pub trees: bool,
    /// Let the trees refine every tuple instead of those whose ridge part reaches the
    /// model's gate (`[screen] gate` of the model file): slower per tuple; on the held-out
    /// library 97 % instead of 96 %, and it orders the tail below the gate too.
    pub refine_all: bool,
    /// Temperature (K) and refractive index of the merit: the estimate stage's values.
    pub temperature_k: f64,
    pub refractive_index: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawEstimate {
    #[serde(default = "default_temperature")]
    temperature_k: f64,
    #[serde(default)]
    twist_deg: Option<f64>,
    #[serde(default = "default_step")]
    scan_step_deg: f64,
    #[serde(default = "default_states")]
    n_states: usize,
    #[serde(default)]
    params: Option<PathBuf>,
    #[serde(default)]
    rates: crate::photophysics::RateParams,
    #[serde(default)]
    band: crate::photophysics::BandParams,
}

/// The rate model's default temperature (300 K, room temperature; common practice).
fn default_temperature() -> f64 {
    crate::photophysics::RateParams::default().temperature_k
}
fn default_step() -> f64 {
    15.0
}
fn default_states() -> usize {
    6
}

/// Settings of the π-tier estimate stage, resolved (defaults visible in the workflow docs).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EstimateStage {
    pub temperature_k: f64,
    pub twist_deg: Option<f64>,
    pub scan_step_deg: f64,
    pub n_states: usize,
    /// A parameter file; None = the shipped set.
    pub params: Option<PathBuf>,
    /// Rate model and emission band for the photophysics stored with each estimate (the rate
    /// temperature is always the estimate's).
    pub rates: crate::photophysics::RateParams,
    pub band: crate::photophysics::BandParams,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCampaign {
    name: String,
    store: PathBuf,
    fragments: Vec<PathBuf>,
    #[serde(default = "default_stages")]
    stages: Vec<String>,
    #[serde(default = "default_chunk")]
    chunk_size: usize,
}

fn default_stages() -> Vec<String> {
    vec!["enumerate".into()]
}

fn default_chunk() -> usize {
    1024
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawDnA {
    #[serde(default = "two")]
    min: usize,
    #[serde(default = "five")]
    max: usize,
    #[serde(default = "alike")]
    donors: DnAMode,
}

fn two() -> usize {
    2
}
fn five() -> usize {
    5
}
fn alike() -> DnAMode {
    DnAMode::Alike
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawEnumerate {
    architectures: Vec<String>,
    #[serde(default = "default_mw")]
    max_mol_weight: f64,
    #[serde(default = "default_heavy")]
    max_heavy_atoms: usize,
    #[serde(default)]
    forbidden_pairs: Vec<(String, String)>,
    #[serde(default)]
    allowed_pairs: Vec<(String, String)>,
    #[serde(default)]
    max_candidates: u64,
    #[serde(default)]
    sample: u64,
    #[serde(default = "default_seed")]
    seed: u64,
    #[serde(default)]
    dn_a: Option<RawDnA>,
    #[serde(default)]
    donors: RoleFilter,
    #[serde(default)]
    acceptors: RoleFilter,
    #[serde(default)]
    bridges: RoleFilter,
}

fn default_mw() -> f64 {
    1000.0
}
fn default_heavy() -> usize {
    200
}
fn default_seed() -> u64 {
    1
}

/// Settings of the enumeration stage, resolved.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EnumerateStage {
    pub params: EnumerateParams,
    pub max_candidates: u64,
    pub sample: u64,
    pub seed: u64,
}

/// A resolved workflow: defaults applied, paths made absolute, names checked.
#[derive(Debug, Clone)]
pub struct Workflow {
    pub path: PathBuf,
    pub text: String,
    pub name: String,
    pub store: PathBuf,
    pub fragments: Vec<PathBuf>,
    pub stages: Vec<String>,
    pub chunk_size: usize,
    pub enumerate: Option<EnumerateStage>,
    pub estimate: Option<EstimateStage>,
    pub screen: Option<ScreenStage>,
    pub ingest: Option<IngestStage>,
    pub calibrate: Option<CalibrateStage>,
    pub shortlist: Option<super::shortlist::ShortlistSettings>,
    pub report: Option<super::report_stage::ReportSettings>,
}

/// Stages this version runs, in the order they run ("screen" selects what "enumerate"
/// builds; "report" needs "shortlist").
pub const KNOWN_STAGES: &[&str] = &[
    "screen",
    "enumerate",
    "estimate",
    "ingest",
    "calibrate",
    "shortlist",
    "report",
];

impl Workflow {
    pub fn load(path: &Path) -> Result<Workflow, CampaignError> {
        let text = std::fs::read_to_string(path).map_err(|source| CampaignError::ReadWorkflow {
            path: path.to_path_buf(),
            source,
        })?;
        Workflow::parse(path, &text)
    }

    /// Parse workflow `text`; `path` locates relative paths and names the file in messages.
    pub fn parse(path: &Path, text: &str) -> Result<Workflow, CampaignError> {
        let err = |message: String| CampaignError::Workflow {
            path: path.to_path_buf(),
            message,
        };
        let raw: RawWorkflow = toml::from_str(text).map_err(|e| {
            let loc = e
                .span()
                .map(|s| {
                    let before = &text[..s.start.min(text.len())];
                    let line = before.matches('\n').count() + 1;
                    let col = before.len() - before.rfind('\n').map_or(0, |i| i + 1) + 1;
                    format!("line {line}, column {col}: ")
                })
                .unwrap_or_default();
            err(format!("{loc}{}", e.message().trim()))
        })?;
        let base = path.parent().unwrap_or(Path::new("."));
        let resolve = |p: &Path| {
            if p.is_absolute() {
                p.to_path_buf()
            } else {
                base.join(p)
            }
        };
        for s in &raw.campaign.stages {
            if !KNOWN_STAGES.contains(&s.as_str()) {
                return Err(err(format!(
                    "campaign.stages: unknown stage '{s}' (known: {})",
                    KNOWN_STAGES.join(", ")
                )));
            }
        }
        if raw.campaign.chunk_size == 0 {
            return Err(err("campaign.chunk_size must be at least 1".into()));
        }
        if raw.campaign.fragments.is_empty() {
            return Err(err(
                "campaign.fragments: name at least one folder or file".into()
            ));
        }
        let enumerate = match raw.enumerate {
            None => {
                if raw.campaign.stages.iter().any(|s| s == "enumerate") {
                    return Err(err(
                        "stage 'enumerate' is listed but there is no [enumerate] table".into(),
                    ));
                }
                None
            }
            Some(e) => {
                let mut archs = Vec::new();
                for a in &e.architectures {
                    let arch = Architecture::parse(a).ok_or_else(|| {
                        err(format!(
                            "enumerate.architectures: unknown architecture '{a}' (known: {})",
                            Architecture::ALL.map(|x| x.as_str()).join(", ")
                        ))
                    })?;
                    if !archs.contains(&arch) {
                        archs.push(arch);
                    }
                }
                if archs.is_empty() {
                    return Err(err("enumerate.architectures is empty".into()));
                }
                if e.max_mol_weight.is_nan() || e.max_mol_weight <= 0.0 {
                    return Err(err("enumerate.max_mol_weight must be positive".into()));
                }
                let dn = e.dn_a.unwrap_or(RawDnA {
                    min: 2,
                    max: 5,
                    donors: DnAMode::Alike,
                });
                if dn.min < 2 || dn.max > 6 || dn.min > dn.max {
                    return Err(err(format!(
                        "enumerate.dn_a: min {} and max {} must satisfy 2 <= min <= max <= 6",
                        dn.min, dn.max
                    )));
                }
                Some(EnumerateStage {
                    params: EnumerateParams {
                        architectures: archs,
                        donors: e.donors,
                        acceptors: e.acceptors,
                        bridges: e.bridges,
                        max_mol_weight: e.max_mol_weight,
                        max_heavy_atoms: e.max_heavy_atoms,
                        forbidden_pairs: e.forbidden_pairs,
                        allowed_pairs: e.allowed_pairs,
                        dn_a_min: dn.min,
                        dn_a_max: dn.max,
                        dn_a_mode: dn.donors,
                    },
                    max_candidates: e.max_candidates,
                    sample: e.sample,
                    seed: e.seed,
                })
            }
        };
        let estimate = match raw.estimate {
            None => {
                if raw.campaign.stages.iter().any(|s| s == "estimate") {
                    Some(EstimateStage {
                        temperature_k: default_temperature(),
                        twist_deg: None,
                        scan_step_deg: 15.0,
                        n_states: 6,
                        params: None,
                        rates: crate::photophysics::RateParams::default(),
                        band: crate::photophysics::BandParams::default(),
                    })
                } else {
                    None
                }
            }
            Some(e) => {
                if e.temperature_k.is_nan() || e.temperature_k <= 0.0 {
                    return Err(err("estimate.temperature_k must be positive (K)".into()));
                }
                if !(1.0..=90.0).contains(&e.scan_step_deg)
                    || (180.0 % e.scan_step_deg).abs() > 1e-9
                {
                    return Err(err(
                        "estimate.scan_step_deg must divide 180 and lie in 1..=90".into(),
                    ));
                }
                if e.n_states == 0 {
                    return Err(err("estimate.n_states must be at least 1".into()));
                }
                if rates_table_sets_temperature(text) {
                    return Err(err(
                        "estimate.rates.temperature_k: not set here; the rates use \
                         estimate.temperature_k (set that instead)"
                            .into(),
                    ));
                }
                let rates = crate::photophysics::RateParams {
                    temperature_k: e.temperature_k,
                    ..e.rates
                };
                rates
                    .validate()
                    .map_err(|m| err(format!("estimate.rates.{m}")))?;
                e.band
                    .validate()
                    .map_err(|m| err(format!("estimate.band.{m}")))?;
                Some(EstimateStage {
                    temperature_k: e.temperature_k,
                    twist_deg: e.twist_deg,
                    scan_step_deg: e.scan_step_deg,
                    n_states: e.n_states,
                    params: e.params.map(|p| resolve(&p)),
                    rates,
                    band: e.band,
                })
            }
        };
        let listed = |name: &str| raw.campaign.stages.iter().any(|s| s == name);
        let screen = if listed("screen") || raw.screen.is_some() {
            let r = raw.screen.clone().unwrap_or(RawScreen {
                pass_fraction: default_pass_fraction(),
                model: None,
                trees: true,
                refine_all: false,
            });
            if !(r.pass_fraction > 0.0 && r.pass_fraction <= 1.0) {
                return Err(err(format!(
                    "screen.pass_fraction must lie in (0, 1], found {}",
                    r.pass_fraction
                )));
            }
            if listed("screen") {
                if !listed("enumerate") {
                    return Err(err(
                        "stage 'screen' selects what 'enumerate' builds: list both".into(),
                    ));
                }
                if let Some(e) = &enumerate
                    && (e.sample > 0 || e.max_candidates > 0)
                {
                    return Err(err(
                        "stage 'screen' replaces enumerate.sample and enumerate.max_candidates: \
                         set them to 0"
                            .into(),
                    ));
                }
            }
            let rate_defaults = crate::photophysics::RateParams::default();
            Some(ScreenStage {
                pass_fraction: r.pass_fraction,
                model: r.model.map(|p| resolve(&p)),
                trees: r.trees,
                refine_all: r.refine_all,
                temperature_k: estimate
                    .as_ref()
                    .map_or(rate_defaults.temperature_k, |e| e.temperature_k),
                refractive_index: estimate
                    .as_ref()
                    .map_or(rate_defaults.refractive_index, |e| e.rates.refractive_index),
            })
        } else {
            None
        };
        let ingest = match raw.ingest {
            None if listed("ingest") => {
                return Err(err(
                    "stage 'ingest' is listed but there is no [ingest] table with paths".into(),
                ));
            }
            None => None,
            Some(r) => {
                let kind = crate::qc::table::ResultKind::from_name(&r.kind).ok_or_else(|| {
                    err(format!(
                        "ingest.kind: unknown kind '{}' (known: {})",
                        r.kind,
                        crate::qc::table::ResultKind::ALL
                            .iter()
                            .map(|k| k.name())
                            .collect::<Vec<_>>()
                            .join(", ")
                    ))
                })?;
                if r.paths.is_empty() {
                    return Err(err("ingest.paths: name at least one file or folder".into()));
                }
                Some(IngestStage {
                    paths: r.paths.iter().map(|p| resolve(p)).collect(),
                    kind,
                    conditions: r.conditions,
                })
            }
        };
        let calibrate = if listed("calibrate") || raw.calibrate.is_some() {
            let r = raw.calibrate.unwrap_or(RawCalibrate {
                kind: None,
                coverage: default_coverage(),
            });
            if !(r.coverage > 0.0 && r.coverage < 1.0) {
                return Err(err(format!(
                    "calibrate.coverage must lie in (0, 1), found {}",
                    r.coverage
                )));
            }
            Some(CalibrateStage {
                kind: r.kind,
                params: crate::calibrate::CalibrateParams {
                    coverage: r.coverage,
                    ..Default::default()
                },
            })
        } else {
            None
        };
        let shortlist = if listed("shortlist") || raw.shortlist.is_some() {
            let sl = raw.shortlist.unwrap_or_default();
            sl.rank
                .validate()
                .map_err(|m| err(format!("shortlist.rank: {m}")))?;
            sl.diversity
                .validate()
                .map_err(|m| err(format!("shortlist.diversity: {m}")))?;
            Some(sl)
        } else {
            None
        };
        let report = if listed("report") || raw.report.is_some() {
            if listed("report") && !listed("shortlist") && shortlist.is_none() {
                return Err(err(
                    "stage 'report' draws the shortlist: list 'shortlist' too".into(),
                ));
            }
            let mut r = raw.report.unwrap_or_default();
            r.out_dir = resolve(&r.out_dir);
            r.references = r.references.map(|p| resolve(&p));
            Some(r)
        } else {
            None
        };
        Ok(Workflow {
            path: path.to_path_buf(),
            text: text.to_string(),
            name: raw.campaign.name,
            store: resolve(&raw.campaign.store),
            fragments: raw.campaign.fragments.iter().map(|p| resolve(p)).collect(),
            stages: raw.campaign.stages,
            chunk_size: raw.campaign.chunk_size,
            enumerate,
            estimate,
            screen,
            ingest,
            calibrate,
            shortlist,
            report,
        })
    }
}

/// Whether the workflow text sets `temperature_k` in `[estimate.rates]` (a field of the rate
/// model that the estimate's own temperature always overrides). `text` has parsed already.
fn rates_table_sets_temperature(text: &str) -> bool {
    toml::from_str::<toml::Table>(text).is_ok_and(|t| {
        t.get("estimate")
            .and_then(|e| e.get("rates"))
            .and_then(|r| r.get("temperature_k"))
            .is_some()
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(extra: &str) -> Result<Workflow, String> {
        let text = format!(
            "[campaign]\nname = \"t\"\nstore = \"t.sqlite\"\nfragments = [\"f\"]\n\
             stages = [\"screen\", \"enumerate\"]\n[enumerate]\narchitectures = [\"D-A\"]\n{extra}"
        );
        Workflow::parse(Path::new("/tmp/wf.toml"), &text).map_err(|e| e.to_string())
    }

    #[test]
    fn rate_and_band_settings_are_checked_with_the_key_named() {
        assert!(parse("[estimate]\n[estimate.rates]\noutcoupling = 0.3\n").is_ok());
        for (table, key, value) in [
            ("rates", "refractive_index", "0.5"),
            ("rates", "reorganisation_ev", "0.0"),
            ("rates", "outcoupling", "1.5"),
            ("rates", "charge_balance", "0.0"),
            ("rates", "k_nr_singlet", "-1.0"),
            ("rates", "soc_ct_le_cm", "-0.1"),
            ("rates", "manifold_kt", "-1.0"),
            ("band", "fwhm_ev", "0.0"),
            ("band", "stokes_shift_ev", "-0.1"),
        ] {
            let e = parse(&format!(
                "[estimate]\n[estimate.{table}]\n{key} = {value}\n"
            ))
            .expect_err(key);
            assert!(e.contains(&format!("estimate.{table}.{key}")), "{e}");
        }
    }

    #[test]
    fn rates_temperature_is_refused_in_favour_of_the_estimate_one() {
        let e = parse("[estimate]\n[estimate.rates]\ntemperature_k = 300.0\n").unwrap_err();
        assert!(e.contains("estimate.temperature_k"), "{e}");
        let w = parse("[estimate]\ntemperature_k = 250.0\n").unwrap();
        assert_eq!(w.estimate.unwrap().rates.temperature_k, 250.0);
        assert_eq!(w.screen.unwrap().temperature_k, 250.0);
    }

    #[test]
    fn screen_without_estimate_takes_the_rate_model_defaults() {
        let w = parse("").unwrap();
        let d = crate::photophysics::RateParams::default();
        let s = w.screen.unwrap();
        assert_eq!(s.temperature_k, d.temperature_k);
        assert_eq!(s.refractive_index, d.refractive_index);
    }
}
