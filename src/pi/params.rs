//! PPP parameter sets: the shipped default (`data/ppp-params.toml`, each value with its source)
//! or a user's file of the same form.

use std::collections::BTreeMap;

use serde::Deserialize;

use super::GammaForm;

/// The shipped parameter file's text.
pub const DEFAULT_PARAMS: &str = include_str!("../../data/ppp-params.toml");

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawParams {
    name: String,
    gamma_form: String,
    beta_cc: f64,
    site: Vec<RawSite>,
    #[serde(default)]
    bond: Vec<RawBond>,
    inductive: Inductive,
    torsion: TorsionScales,
    corrections: RawCorrections,
    #[serde(default)]
    validation: Validation,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCorrections {
    triplet_exchange: f64,
    ct_stabilisation_ev: f64,
}

/// How this parameter set did against the reference set: mean absolute errors (eV) and the
/// acceptance bars. A quantity whose error is above the bar is flagged in every estimate and
/// not ranked on. A user file without this table is unvalidated: everything is flagged.
#[derive(Debug, Clone, PartialEq, Deserialize, serde::Serialize)]
#[serde(deny_unknown_fields)]
pub struct Validation {
    pub reference: String,
    /// The project's acceptance bars (set in the issue text, not derived from data; the shipped
    /// file states 0.3 eV and 0.8): largest mean absolute error (eV) and smallest share of
    /// agreeing T1 characters that pass.
    pub bar_ev: f64,
    pub s1_mae_ev: Option<f64>,
    pub t1_mae_ev: Option<f64>,
    pub fragment_t1_mae_ev: Option<f64>,
    pub delta_est_mae_ev: Option<f64>,
    /// Share of donor–acceptor molecules whose T1 character (CT/LE) agrees with the reference.
    pub t1_character_agreement: Option<f64>,
    pub character_bar: f64,
}

/// No validation (a user file without the table): no errors and no bars. The bars are set so
/// that nothing can pass (−∞ eV, +∞ share) rather than to copies of the shipped values: with
/// every error `None`, everything is flagged anyway, and a default filled in later still fails
/// closed (NaN would let any stated error pass, `x > NaN` being false).
impl Default for Validation {
    fn default() -> Self {
        Validation {
            reference: "none (user parameter file without a [validation] table)".into(),
            bar_ev: f64::NEG_INFINITY,
            s1_mae_ev: None,
            t1_mae_ev: None,
            fragment_t1_mae_ev: None,
            delta_est_mae_ev: None,
            t1_character_agreement: None,
            character_bar: f64::INFINITY,
        }
    }
}

impl Validation {
    /// Quantities that missed their bar (or were never validated).
    pub fn failed(&self) -> Vec<&'static str> {
        let miss = |v: Option<f64>| v.is_none_or(|x| x > self.bar_ev);
        let mut out = Vec::new();
        if miss(self.s1_mae_ev) {
            out.push("S1");
        }
        if miss(self.t1_mae_ev)
            || miss(self.fragment_t1_mae_ev)
            || self
                .t1_character_agreement
                .is_none_or(|x| x < self.character_bar)
        {
            out.push("T1");
        }
        if miss(self.delta_est_mae_ev) || out.contains(&"S1") || out.contains(&"T1") {
            out.push("dEST");
        }
        out
    }
}

/// The two fitted scales of the torsion model (see `pi::torsion`).
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TorsionScales {
    pub conjugation_scale: f64,
    pub steric_scale: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSite {
    #[serde(rename = "type")]
    kind: String,
    electrons: u8,
    ip: f64,
    gamma: f64,
    source: String,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawBond {
    types: (String, String),
    k: f64,
}

/// Inductive shifts for σ-acceptor groups that carry no π orbital.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Inductive {
    pub sulfone_ip_shift: f64,
    pub phosphine_oxide_ip_shift: f64,
}

/// One site type's parameters.
#[derive(Debug, Clone, PartialEq)]
pub struct SiteParams {
    pub electrons: u8,
    pub ip: f64,
    pub gamma: f64,
    pub source: String,
}

/// A resolved parameter set.
#[derive(Debug, Clone, PartialEq)]
pub struct PppParams {
    pub name: String,
    pub gamma_form: GammaForm,
    pub beta_cc: f64,
    pub sites: BTreeMap<String, SiteParams>,
    /// β factors by unordered type pair (sorted names).
    pub bond_k: BTreeMap<(String, String), f64>,
    pub inductive: Inductive,
    pub torsion: TorsionScales,
    pub corrections: super::Corrections,
    pub validation: Validation,
}

impl PppParams {
    /// The torsion model's settings: this set's fitted scales at `temperature_k`.
    pub fn torsion_params(&self, temperature_k: f64) -> super::torsion::TorsionParams {
        super::torsion::TorsionParams {
            conjugation_scale: self.torsion.conjugation_scale,
            steric_scale: self.torsion.steric_scale,
            temperature_k,
        }
    }

    /// The shipped default set.
    pub fn default_set() -> PppParams {
        PppParams::parse(DEFAULT_PARAMS).expect("the shipped parameter file is valid")
    }

    /// Parse a parameter file; the error names the line and what is wrong.
    pub fn parse(text: &str) -> Result<PppParams, String> {
        let raw: RawParams = toml::from_str(text).map_err(|e| {
            let line = e
                .span()
                .map(|s| text[..s.start.min(text.len())].matches('\n').count() + 1)
                .unwrap_or(0);
            format!("line {line}: {}", e.message().trim())
        })?;
        let gamma_form = match raw.gamma_form.as_str() {
            "mataga-nishimoto" => GammaForm::MatagaNishimoto,
            "ohno" => GammaForm::Ohno,
            other => {
                return Err(format!(
                    "gamma_form '{other}': expected mataga-nishimoto or ohno"
                ));
            }
        };
        let mut sites = BTreeMap::new();
        for s in raw.site {
            if s.electrons > 2 || !(s.ip.is_finite() && s.gamma > 0.0) {
                return Err(format!(
                    "site '{}': electrons 0–2, ip finite, gamma > 0",
                    s.kind
                ));
            }
            if sites
                .insert(
                    s.kind.clone(),
                    SiteParams {
                        electrons: s.electrons,
                        ip: s.ip,
                        gamma: s.gamma,
                        source: s.source,
                    },
                )
                .is_some()
            {
                return Err(format!("site '{}' defined twice", s.kind));
            }
        }
        if !(0.0..1.0).contains(&raw.corrections.triplet_exchange)
            || !raw.corrections.ct_stabilisation_ev.is_finite()
        {
            return Err(
                "[corrections]: triplet_exchange in [0, 1), ct_stabilisation_ev finite".into(),
            );
        }
        let mut bond_k = BTreeMap::new();
        for b in raw.bond {
            for t in [&b.types.0, &b.types.1] {
                if !sites.contains_key(t) {
                    return Err(format!("bond factor names unknown site type '{t}'"));
                }
            }
            bond_k.insert(pair_key(&b.types.0, &b.types.1), b.k);
        }
        Ok(PppParams {
            name: raw.name,
            gamma_form,
            beta_cc: raw.beta_cc,
            sites,
            bond_k,
            inductive: raw.inductive,
            torsion: raw.torsion,
            corrections: super::Corrections {
                triplet_exchange: raw.corrections.triplet_exchange,
                ct_stabilisation_ev: raw.corrections.ct_stabilisation_ev,
            },
            validation: raw.validation,
        })
    }

    /// β for a bond between two site types (untwisted); `None` when the pair is not
    /// parameterised (C–C is β_CC itself).
    pub fn beta(&self, a: &str, b: &str) -> Option<f64> {
        if a == "C" && b == "C" {
            return Some(self.beta_cc);
        }
        self.bond_k.get(&pair_key(a, b)).map(|k| k * self.beta_cc)
    }
}

fn pair_key(a: &str, b: &str) -> (String, String) {
    if a <= b {
        (a.to_string(), b.to_string())
    } else {
        (b.to_string(), a.to_string())
    }
}
