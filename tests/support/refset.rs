//! The TDA-PBE0/6-31G reference set (`tests/fixtures/tddft`) read for comparison with the π
//! tier: shared by the validation test and `examples/fit_corrections.rs` (included by path).
//!
//! Only π→π* reference states are compared: a state counts as π→π* when the weighted
//! π fraction of both orbitals of its excitation pairs is at least 0.7 (orbital π fractions from
//! `classify_orbitals.py`). n→π* and π→σ* states are invisible to a π model by construction;
//! when no π→π* state is among the three computed roots the quantity is skipped.
//!
//! Charge-transfer character of a reference state: Σ_pairs w·(1 − Σ_u P_from(u)·P_to(u)) with
//! P the Löwdin population of an orbital on unit u (units as in `pi::estimate::partition`); the
//! same separation probability as the π tier's configuration weights. State labelled CT when
//! at least 0.5. Entries with the same geometry (same SMILES and twist) count once.
#![allow(dead_code)]

use std::path::{Path, PathBuf};

use lumisift::chem::{Molecule, parse_smiles};

/// Minimum π fraction for a π→π* reference state.
pub const PI_PI_MIN: f64 = 0.7;

#[derive(Debug, Clone)]
pub struct RefState {
    pub energy_ev: f64,
    pub osc: f64,
    pub pi_fraction: f64,
    /// Charge-transfer probability (None without units or populations).
    pub ct: f64,
}

#[derive(Debug, Clone)]
pub struct RefEntry {
    pub name: String,
    pub smiles: String,
    pub molecule: Molecule,
    /// Twist of every link (degrees), 0 for molecules without links.
    pub twist_deg: f64,
    /// True for donor–acceptor molecules (more than one unit), false for fragments.
    pub is_pair: bool,
    pub scan: bool,
    pub singlets: Vec<RefState>,
    pub triplets: Vec<RefState>,
}

impl RefEntry {
    /// Lowest π→π* singlet / triplet among the computed roots.
    pub fn pi_s1(&self) -> Option<&RefState> {
        self.singlets.iter().find(|s| s.pi_fraction >= PI_PI_MIN)
    }
    pub fn pi_t1(&self) -> Option<&RefState> {
        self.triplets.iter().find(|s| s.pi_fraction >= PI_PI_MIN)
    }
}

pub fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/tddft")
}

/// Every reference result that has its orbital classification.
pub fn load() -> Vec<RefEntry> {
    let root = root();
    let ppp = lumisift::pi::params::PppParams::default_set();
    let list = std::fs::read_to_string(root.join("reference_set.tsv")).expect("reference list");
    let mut out = Vec::new();
    // The same geometry listed twice (a dyad at a twist that is also a scan point) counts once.
    let mut seen = std::collections::BTreeSet::new();
    for line in list
        .lines()
        .filter(|l| !l.starts_with('#') && !l.trim().is_empty())
    {
        let f: Vec<&str> = line.split('\t').collect();
        let scan = f[0].starts_with("scan-");
        let twists: Vec<Option<f64>> = if f[2].trim() == "-" {
            vec![None]
        } else {
            f[2].split(',').map(|t| t.trim().parse().ok()).collect()
        };
        for t in twists {
            let name = match t {
                Some(t) => format!("{}_{:03}", f[0], t.round() as i64),
                None => f[0].to_string(),
            };
            let read = |suffix: &str| -> Option<serde_json::Value> {
                let text =
                    std::fs::read_to_string(root.join("results").join(format!("{name}{suffix}")))
                        .ok()?;
                serde_json::from_str(&text).ok()
            };
            let (Some(r), Some(o)) = (read(".json"), read(".orbitals.json")) else {
                continue;
            };
            if r.get("error").is_some() {
                continue;
            }
            if !seen.insert(format!("{} {:?}", f[1], t.map(|x| x.round() as i64))) {
                continue;
            }
            let molecule = parse_smiles(f[1]).expect("reference SMILES parse");
            let unit = lumisift::pi::estimate::partition(&molecule, &ppp);
            let n_units = unit.iter().max().map_or(0, |m| m + 1);
            let orb = &o["orbitals"];
            let unit_pop = |label: &str| -> Vec<f64> {
                let mut v = vec![0.0; n_units];
                for (a, p) in orb[label]["heavy_population"]
                    .as_array()
                    .expect("populations")
                    .iter()
                    .enumerate()
                {
                    v[unit[a]] += p.as_f64().unwrap();
                }
                v
            };
            let states = |key: &str| -> Vec<RefState> {
                r[key]
                    .as_array()
                    .expect("states")
                    .iter()
                    .map(|st| {
                        let pairs = st["pairs"].as_array().expect("pairs");
                        let (mut w, mut pi, mut ct) = (0.0, 0.0, 0.0);
                        for p in pairs {
                            let wt = p["weight"].as_f64().unwrap();
                            let (a, b) = (p["from"].as_str().unwrap(), p["to"].as_str().unwrap());
                            let pf = orb[a]["pi_fraction"]
                                .as_f64()
                                .unwrap()
                                .min(orb[b]["pi_fraction"].as_f64().unwrap());
                            let (pa, pb) = (unit_pop(a), unit_pop(b));
                            let same: f64 = pa.iter().zip(&pb).map(|(x, y)| x * y).sum();
                            w += wt;
                            pi += wt * pf;
                            ct += wt * (1.0 - same).clamp(0.0, 1.0);
                        }
                        RefState {
                            energy_ev: st["energy_ev"].as_f64().unwrap(),
                            osc: st["oscillator_strength"].as_f64().unwrap_or(0.0),
                            pi_fraction: pi / w,
                            ct: ct / w,
                        }
                    })
                    .collect()
            };
            out.push(RefEntry {
                name,
                smiles: f[1].to_string(),
                twist_deg: t.unwrap_or(0.0),
                is_pair: n_units > 1,
                scan,
                singlets: states("singlets"),
                triplets: states("triplets"),
                molecule,
            });
        }
    }
    out
}

/// Our values for one reference entry at its twist (S1, T1, f(S1), CT number of T1), with the
/// given parameters.
pub fn ours(
    e: &RefEntry,
    ppp: &lumisift::pi::params::PppParams,
) -> Result<lumisift::pi::estimate::Estimate, lumisift::pi::PiError> {
    lumisift::pi::estimate::estimate(
        &e.molecule,
        ppp,
        &lumisift::pi::estimate::EstimateParams {
            twist_deg: Some(e.twist_deg),
            n_states: 3,
            ..Default::default()
        },
    )
}

/// Metrics of one parameter set against the reference.
#[derive(Debug, Clone, Default)]
pub struct Metrics {
    pub n_s1: usize,
    pub s1_mae: f64,
    pub n_t1: usize,
    pub t1_mae: f64,
    pub n_frag_t1: usize,
    pub frag_t1_mae: f64,
    pub n_dest: usize,
    pub dest_mae: f64,
    pub n_character: usize,
    /// Pairs whose T1 character (CT vs LE) agrees, and that count over `n_character`.
    pub n_character_agree: usize,
    pub character_agreement: f64,
    pub s1_spearman: f64,
    pub t1_spearman: f64,
    pub dest_spearman: f64,
    pub f_spearman: f64,
    pub rows: Vec<Row>,
}

/// One comparison row: ours / reference for S1, T1, f(S1) and the T1 CT number.
#[derive(Debug, Clone)]
pub struct Row {
    pub name: String,
    pub s1: (f64, f64),
    pub t1: (f64, f64),
    pub f: (f64, f64),
    pub t1_ct: (f64, f64),
}

/// Our estimate of every entry with `ppp` (None where it failed), computed once for both
/// [`metrics`] views (each estimate carries raw and corrected values).
pub fn estimates(
    entries: &[RefEntry],
    ppp: &lumisift::pi::params::PppParams,
) -> Vec<Option<lumisift::pi::estimate::Estimate>> {
    entries.iter().map(|e| ours(e, ppp).ok()).collect()
}

/// Compare the π tier (raw or corrected values of `estimates`, one per entry) with the
/// reference.
pub fn metrics(
    entries: &[RefEntry],
    estimates: &[Option<lumisift::pi::estimate::Estimate>],
    corrected: bool,
) -> Metrics {
    use lumisift::fast::fit::spearman;
    let mut m = Metrics::default();
    let (mut s1o, mut s1r, mut t1o, mut t1r, mut do_, mut dr, mut fo, mut fr) = (
        vec![],
        vec![],
        vec![],
        vec![],
        vec![],
        vec![],
        vec![],
        vec![],
    );
    let mut agree = 0usize;
    for (e, est) in entries.iter().zip(estimates) {
        let Some(est) = est else { continue };
        let (s1, t1) = if corrected {
            (est.s1_ev, est.t1_ev)
        } else {
            (est.raw_s1_ev, est.raw_t1_ev)
        };
        let (rs, rt) = (e.pi_s1(), e.pi_t1());
        let our_t1_ct = est.triplets.first().map_or(f64::NAN, |t| t.ct_number);
        m.rows.push(Row {
            name: e.name.clone(),
            s1: (s1, rs.map_or(f64::NAN, |s| s.energy_ev)),
            t1: (t1, rt.map_or(f64::NAN, |s| s.energy_ev)),
            f: (est.f_s1, rs.map_or(f64::NAN, |s| s.osc)),
            t1_ct: (our_t1_ct, rt.map_or(f64::NAN, |s| s.ct)),
        });
        if let Some(rs) = rs {
            s1o.push(s1);
            s1r.push(rs.energy_ev);
            fo.push(est.f_s1);
            fr.push(rs.osc);
        }
        if let Some(rt) = rt {
            t1o.push(t1);
            t1r.push(rt.energy_ev);
            if !e.is_pair {
                m.n_frag_t1 += 1;
                m.frag_t1_mae += (t1 - rt.energy_ev).abs();
            } else {
                m.n_character += 1;
                if (our_t1_ct >= 0.5) == (rt.ct >= 0.5) {
                    agree += 1;
                }
            }
        }
        if let (Some(rs), Some(rt)) = (rs, rt) {
            do_.push(s1 - t1);
            dr.push(rs.energy_ev - rt.energy_ev);
        }
    }
    let mae = |a: &[f64], b: &[f64]| {
        a.iter().zip(b).map(|(x, y)| (x - y).abs()).sum::<f64>() / a.len().max(1) as f64
    };
    m.n_s1 = s1o.len();
    m.s1_mae = mae(&s1o, &s1r);
    m.n_t1 = t1o.len();
    m.t1_mae = mae(&t1o, &t1r);
    m.frag_t1_mae /= m.n_frag_t1.max(1) as f64;
    m.n_dest = do_.len();
    m.dest_mae = mae(&do_, &dr);
    m.n_character_agree = agree;
    m.character_agreement = agree as f64 / m.n_character.max(1) as f64;
    m.s1_spearman = spearman(&s1o, &s1r);
    m.t1_spearman = spearman(&t1o, &t1r);
    m.dest_spearman = spearman(&do_, &dr);
    m.f_spearman = spearman(&fo, &fr);
    m
}
