//! The pair table: the π tier's own torsion-averaged S1, T1, ΔEST and f of every dimer a
//! tuple's arm can contain — donor–acceptor, donor–bridge and bridge–acceptor — computed once
//! per run (or read from the shipped cache) and looked up per arm.
//!
//! A dimer is two fragments joined through the sites a tuple joins them by (a one-site
//! fragment on any site of its partner), every other site capped with hydrogen, built by the
//! combiner's own `assemble` and estimated by `pi::estimate::estimate` with the settings given
//! (the workflow's `[estimate]` defaults: 300 K, 15° scan, 6 states). Sites related by the
//! fragment's symmetry give the same molecule, so one dimer per orbit is computed and shared.
//! A D–A tuple *is* its dimer, so for that architecture the table is exact (a cached π-tier
//! calculation); for the others it gives the arm's own charge-transfer pair and the two halves
//! of a bridged arm, which the fitted model combines with the other descriptors.
//!
//! Cost: one π estimate per dimer, in parallel (measured on two shared cores: 3,380 dimers of
//! the shipped library ≈ 4.5 min, the demo workflow's 120 in 9.5 s); only fragments the caller
//! asks for are paired, and the shipped library's dimers are cached in `data/fast-pairs.csv`.

use std::collections::BTreeMap;

use rayon::prelude::*;

use crate::combine::{Arm, Tuple, assemble};
use crate::fragments::Library;
use crate::model::{Architecture, Role};
use crate::pi::estimate::{EstimateParams, estimate};
use crate::pi::params::PppParams;

/// The π tier's torsion-averaged values of one dimer (NaN where it was not computed or its
/// SCF failed).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PairValues {
    pub s1_ev: f64,
    pub t1_ev: f64,
    pub delta_est_ev: f64,
    pub f_s1: f64,
}

impl PairValues {
    pub const MISSING: PairValues = PairValues {
        s1_ev: f64::NAN,
        t1_ev: f64::NAN,
        delta_est_ev: f64::NAN,
        f_s1: f64::NAN,
    };

    pub fn is_known(&self) -> bool {
        self.s1_ev.is_finite()
            && self.t1_ev.is_finite()
            && self.delta_est_ev.is_finite()
            && self.f_s1.is_finite()
    }
}

/// A dimer's values with the logarithms the descriptors use, computed once (none per tuple).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PairEntry {
    pub v: PairValues,
    /// log10(max(ΔEST, 0) + offset) and log10(max(f, 0) + floor), the fast model's scales.
    pub log10_delta_est: f64,
    pub log10_f: f64,
    /// 2·log10 S1 + log10(f + floor): log10 k_r up to the refractive-index constant.
    pub log10_s1sq_f: f64,
    /// The dimer's own merit without its constant: `log10_s1sq_f` − max(ΔEST, 0)/(k_BT ln 10)
    /// at the table's temperature (log10 k_TADF up to the refractive-index constant).
    pub merit: f64,
}

impl PairEntry {
    fn new(v: PairValues, temperature_k: f64) -> PairEntry {
        use super::model::{DEST_OFFSET_EV, F_FLOOR};
        let log10_f = (v.f_s1.max(0.0) + F_FLOOR).log10();
        let log10_s1sq_f = 2.0 * v.s1_ev.log10() + log10_f;
        PairEntry {
            v,
            log10_delta_est: (v.delta_est_ev.max(0.0) + DEST_OFFSET_EV).log10(),
            log10_f,
            log10_s1sq_f,
            // NaN unless every value is known, so one test answers `is_known`.
            merit: if v.is_known() {
                log10_s1sq_f
                    - v.delta_est_ev.max(0.0)
                        / (crate::photophysics::K_B_EV * temperature_k * std::f64::consts::LN_10)
            } else {
                f64::NAN
            },
        }
    }

    #[inline]
    pub fn is_known(&self) -> bool {
        self.merit.is_finite()
    }
}

/// Table over global site indices (the card set's `site_offset` numbering): slot
/// `d * n_sites + a` of `index` points into `entries` at the dimer of donor-side site `d` with
/// acceptor-side site `a` (donor with acceptor, donor with bridge, bridge with acceptor; the
/// role pairs never collide). One entry per computed dimer (symmetric site orbits share it),
/// entry 0 unknown: a dense index of 4-byte slots and a short entry list stay in cache on the
/// hot path.
#[derive(Debug, Clone)]
pub struct PairTable {
    pub n_sites: usize,
    /// Temperature of the torsion averages and of the entries' merit.
    pub temperature_k: f64,
    pub index: Vec<u32>,
    pub entries: Vec<PairEntry>,
    /// Dimers (orbit representatives) estimated in this run, taken from the cache, and failed
    /// (SCF not converged: entries stay unknown).
    pub computed: usize,
    pub cached: usize,
    pub failed: usize,
}

/// One dimer to compute: (donor, donor site, acceptor, acceptor site).
type Job = (usize, usize, usize, usize);

/// The smallest site index `s` maps to under the fragment's site symmetry (its orbit's
/// representative).
fn representative(lib: &Library, f: usize, s: usize) -> usize {
    lib.fragments[f]
        .site_symmetry
        .iter()
        .map(|p| p[s] as usize)
        .min()
        .unwrap_or(s)
}

/// The dimer of donor-side fragment `d` (site `sd`) and acceptor-side fragment `a` (site `sa`)
/// as a tuple (the multi-site partner is the core, its other sites capped with hydrogen), or
/// None when neither partner is a one-site fragment joined through its site 1 (the combiner
/// caps only core sites).
pub fn dimer_tuple(lib: &Library, d: usize, sd: usize, a: usize, sa: usize) -> Option<Tuple> {
    let (core, site, terminal) = if sd == 0 && lib.fragments[d].site_count() == 1 {
        (a, sa, d)
    } else if sa == 0 && lib.fragments[a].site_count() == 1 {
        (d, sd, a)
    } else {
        return None;
    };
    let mut arms = vec![Arm::H; lib.fragments[core].site_count()];
    arms[site] = Arm::Terminal(terminal);
    Some(Tuple {
        architecture: Architecture::DA,
        core,
        arms: arms.into(),
    })
}

/// The π-tier estimate of one dimer.
pub fn estimate_dimer(
    lib: &Library,
    (d, sd, a, sa): Job,
    ppp: &PppParams,
    params: &EstimateParams,
) -> PairValues {
    let Some(t) = dimer_tuple(lib, d, sd, a, sa) else {
        return PairValues::MISSING;
    };
    let c = assemble(lib, &t);
    match estimate(&c.mol, ppp, params) {
        Ok(e) => PairValues {
            s1_ev: e.avg_s1_ev,
            t1_ev: e.avg_t1_ev,
            delta_est_ev: e.avg_delta_est_ev,
            f_s1: e.avg_f_s1,
        },
        Err(_) => PairValues::MISSING,
    }
}

/// The dimers (orbit representatives) `wanted` selects: donor–acceptor, donor–bridge and
/// bridge–acceptor (the two halves of a bridged arm), each with its donor side first.
pub fn dimer_jobs(lib: &Library, wanted: &(dyn Fn(usize) -> bool + Sync)) -> Vec<Job> {
    let pick = |role: Role| -> Vec<usize> {
        (0..lib.fragments.len())
            .filter(|&i| lib.fragments[i].role == role && wanted(i))
            .collect()
    };
    let (donors, acceptors, bridges) =
        (pick(Role::Donor), pick(Role::Acceptor), pick(Role::Bridge));
    let mut jobs: Vec<Job> = Vec::new();
    for (firsts, seconds) in [
        (&donors, &acceptors),
        (&donors, &bridges),
        (&bridges, &acceptors),
    ] {
        for &d in firsts {
            for sd in 0..lib.fragments[d].site_count() {
                for &a in seconds {
                    for sa in 0..lib.fragments[a].site_count() {
                        if representative(lib, d, sd) == sd
                            && representative(lib, a, sa) == sa
                            && dimer_tuple(lib, d, sd, a, sa).is_some()
                        {
                            jobs.push((d, sd, a, sa));
                        }
                    }
                }
            }
        }
    }
    jobs
}

/// Key of a fragment in the cache: its id and the first 16 hex digits of the BLAKE3 hash of
/// its canonical SMILES (with site classes), so an edited fragment never matches a stale row.
pub fn fragment_key(lib: &Library, f: usize) -> String {
    let fr = &lib.fragments[f];
    let h = blake3::hash(fr.canonical_smiles.as_bytes()).to_hex();
    format!("{}#{}", fr.id, &h[..16])
}

/// Stored dimer values (`data/fast-pairs.csv`): π-tier results of the shipped library's dimers
/// at the default parameter set and default estimate settings, written by
/// `cargo run --release --example fit_fast_tier -- --write-pairs`. Only consulted when a table
/// is built with exactly those settings; anything else is computed.
#[derive(Debug, Clone, Default)]
pub struct PairCache {
    map: BTreeMap<(String, usize, String, usize), PairValues>,
}

/// The shipped cache's text.
pub const SHIPPED_CACHE: &str = include_str!("../../data/fast-pairs.csv");

/// Header of the cache file (after its comment lines).
pub const CACHE_HEADER: &str = "donor_side_key,donor_side_site,acceptor_side_key,acceptor_side_site,avg_s1_ev,avg_t1_ev,avg_delta_est_ev,avg_f_s1";

impl PairCache {
    pub fn parse(text: &str) -> Result<PairCache, String> {
        let mut map = BTreeMap::new();
        let mut header = false;
        for (n, line) in text.lines().enumerate() {
            if line.starts_with('#') || line.trim().is_empty() {
                continue;
            }
            if !header {
                if line != CACHE_HEADER {
                    return Err(format!("line {}: expected header {CACHE_HEADER}", n + 1));
                }
                header = true;
                continue;
            }
            let c: Vec<&str> = line.split(',').collect();
            if c.len() != 8 {
                return Err(format!("line {}: {} fields, expected 8", n + 1, c.len()));
            }
            let int = |s: &str| {
                s.parse::<usize>()
                    .map_err(|e| format!("line {}: {e}", n + 1))
            };
            let num = |s: &str| s.parse::<f64>().map_err(|e| format!("line {}: {e}", n + 1));
            map.insert(
                (c[0].to_string(), int(c[1])?, c[2].to_string(), int(c[3])?),
                PairValues {
                    s1_ev: num(c[4])?,
                    t1_ev: num(c[5])?,
                    delta_est_ev: num(c[6])?,
                    f_s1: num(c[7])?,
                },
            );
        }
        Ok(PairCache { map })
    }

    pub fn shipped() -> PairCache {
        PairCache::parse(SHIPPED_CACHE).expect("the shipped pair cache is valid")
    }

    pub fn len(&self) -> usize {
        self.map.len()
    }

    pub fn is_empty(&self) -> bool {
        self.map.is_empty()
    }

    /// The stored values of a dimer (orbit representative sites), if any.
    pub fn get(&self, lib: &Library, (d, sd, a, sa): Job) -> Option<PairValues> {
        self.map
            .get(&(fragment_key(lib, d), sd, fragment_key(lib, a), sa))
            .copied()
    }

    /// Rows for every dimer of `jobs` with its values (NaN rows, failed SCFs, are written as
    /// NaN and read back as such).
    pub fn to_csv(lib: &Library, rows: &[(Job, PairValues)]) -> String {
        let mut out = String::new();
        out.push_str(CACHE_HEADER);
        out.push('\n');
        for &((d, sd, a, sa), v) in rows {
            out.push_str(&format!(
                "{},{sd},{},{sa},{:.6},{:.6},{:.6},{:.6}\n",
                fragment_key(lib, d),
                fragment_key(lib, a),
                v.s1_ev,
                v.t1_ev,
                v.delta_est_ev,
                v.f_s1
            ));
        }
        out
    }
}

impl PairTable {
    /// Every dimer between the donors and acceptors for which `wanted` is true: from `cache`
    /// when the settings are the shipped defaults (`PppParams::default_set()`,
    /// `EstimateParams::default()`) and the cache holds it, otherwise estimated here, in
    /// parallel (rayon's pool). `site_offset` and `n_sites` are the card set's numbering.
    pub fn build(
        lib: &Library,
        site_offset: &[usize],
        n_sites: usize,
        ppp: &PppParams,
        params: &EstimateParams,
        wanted: &(dyn Fn(usize) -> bool + Sync),
        cache: Option<&PairCache>,
    ) -> PairTable {
        let jobs = dimer_jobs(lib, wanted);
        let usable = cache
            .filter(|_| *params == EstimateParams::default() && *ppp == PppParams::default_set());
        let mut found: Vec<Option<PairValues>> = jobs
            .iter()
            .map(|&j| usable.and_then(|c| c.get(lib, j)))
            .collect();
        let cached = found.iter().filter(|v| v.is_some()).count();
        // Larger dimers first, so the parallel tail is short.
        let mut todo: Vec<usize> = (0..jobs.len()).filter(|&k| found[k].is_none()).collect();
        todo.sort_by_key(|&k| {
            let (d, _, a, _) = jobs[k];
            std::cmp::Reverse(lib.fragments[d].heavy_atoms + lib.fragments[a].heavy_atoms)
        });
        let fresh: Vec<PairValues> = todo
            .par_iter()
            .map(|&k| estimate_dimer(lib, jobs[k], ppp, params))
            .collect();
        for (&k, v) in todo.iter().zip(fresh) {
            found[k] = Some(v);
        }
        let mut entries = vec![PairEntry::new(PairValues::MISSING, params.temperature_k)];
        let mut index = vec![0u32; n_sites * n_sites];
        let mut failed = 0;
        for (&(d, sd, a, sa), v) in jobs.iter().zip(&found) {
            let e = PairEntry::new(v.unwrap_or(PairValues::MISSING), params.temperature_k);
            failed += usize::from(!e.is_known());
            let k = u32::try_from(entries.len()).expect("fewer than 2^32 dimers");
            entries.push(e);
            // Copy to every site pair of the two orbits.
            for sd2 in 0..lib.fragments[d].site_count() {
                if representative(lib, d, sd2) != sd {
                    continue;
                }
                for sa2 in 0..lib.fragments[a].site_count() {
                    if representative(lib, a, sa2) == sa {
                        index[(site_offset[d] + sd2) * n_sites + site_offset[a] + sa2] = k;
                    }
                }
            }
        }
        PairTable {
            n_sites,
            temperature_k: params.temperature_k,
            index,
            entries,
            computed: todo.len(),
            cached,
            failed,
        }
    }

    /// The mean of the known entries' values (each computed dimer once), with
    /// its logarithms recomputed; all NaN when none is known.
    pub fn mean_entry(&self) -> PairEntry {
        let known: Vec<&PairEntry> = self.entries.iter().filter(|e| e.is_known()).collect();
        let n = known.len() as f64;
        let mean = |g: &dyn Fn(&PairValues) -> f64| known.iter().map(|e| g(&e.v)).sum::<f64>() / n;
        PairEntry::new(
            PairValues {
                s1_ev: mean(&|v| v.s1_ev),
                t1_ev: mean(&|v| v.t1_ev),
                delta_est_ev: mean(&|v| v.delta_est_ev),
                f_s1: mean(&|v| v.f_s1),
            },
            self.temperature_k,
        )
    }

    /// The dimer of global donor-side site `d` and global acceptor-side site `a`.
    #[inline]
    pub fn get(&self, d: usize, a: usize) -> &PairEntry {
        &self.entries[self.index[d * self.n_sites + a] as usize]
    }
}
