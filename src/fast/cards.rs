//! Fragment cards: what the fast tier knows of each fragment, from the fragment's own π
//! calculation, computed once per library.
//!
//! - **Levels**: the fragment capped with hydrogen at every site, planar layout, PPP-SCF orbital
//!   energies (HOMO, LUMO) and the lowest singlet and triplet by corrected CIS — the same
//!   numbers the π tier computes for a unit on its own (`pi::estimate::local_levels`).
//! - **Site torsion profile** (the steric class of an attachment, as numbers rather than a
//!   label): the fragment joined through that site to a phenyl probe (other sites capped with
//!   hydrogen), raw π and steric energies along the twist (0–180° every 15°, π energy at 30°
//!   anchors interpolated in cos²θ, exactly as the π tier scans a link).
//! - **Pair twists**: for two sites joined in a tuple, the link's profile is approximated by
//!   additivity of the two sides against the probe, E_XY(θ) ≈ E_X–Ph(θ) + E_Y–Ph(θ) −
//!   E_Ph–Ph(θ) for each of the two raw terms, then scaled and Boltzmann-weighted with the π
//!   tier's torsion parameters. The equilibrium twist and ⟨cos²θ⟩ of every site pair are
//!   tabulated once, so a tuple costs table look-ups.

use super::pairs::{PairCache, PairEntry, PairTable};
use crate::combine::{Arm, Tuple, assemble};
use crate::fragments::{Fragment, Library};
use crate::geometry::{layout, rotate_about_bond};
use crate::model::{Architecture, Role};
use crate::pi::ScfResult;
use crate::pi::estimate::{EstimateParams, local_levels, planar_scf};
use crate::pi::params::PppParams;
use crate::pi::torsion::{TorsionParams, profile, raw_scan_with};

/// Twist grid of the site profiles (degrees): 0, 15, …, 180.
pub const GRID_DEG: [f64; 13] = [
    0.0, 15.0, 30.0, 45.0, 60.0, 75.0, 90.0, 105.0, 120.0, 135.0, 150.0, 165.0, 180.0,
];

/// SMILES of the probe every site is joined to: phenyl.
pub const PROBE_SMILES: &str = "[*:1]c1ccccc1";

/// Raw π and steric energies (kJ/mol, unscaled) of a site joined to the probe, on [`GRID_DEG`].
#[derive(Debug, Clone, PartialEq)]
pub struct SiteProfile {
    pub e_pi: [f64; 13],
    pub e_steric: [f64; 13],
}

/// One fragment's card.
#[derive(Debug, Clone, PartialEq)]
pub struct FragmentCard {
    pub id: String,
    pub role: Role,
    pub homo_ev: f64,
    pub lumo_ev: f64,
    pub s1_ev: f64,
    pub t1_ev: f64,
    /// One profile per site, in site order; None where the probe scan failed (the pair twist
    /// then falls back to the probe reference, i.e. a biphenyl-like link).
    pub sites: Vec<Option<SiteProfile>>,
    /// Per site: squared HOMO and LUMO coefficients at the anchor atom (summed over orbitals
    /// within [`DEGENERATE_EV`] of the frontier one; 0 when the anchor carries no π orbital).
    /// Through-bond coupling across a link scales with these: a donor whose HOMO has a node at
    /// its nitrogen couples weakly whatever the twist.
    pub anchor_homo2: Vec<f64>,
    pub anchor_lumo2: Vec<f64>,
}

/// Orbitals within this energy (eV) of the HOMO (LUMO) count as degenerate with it (a choice
/// of this tool: symmetry-degenerate PPP orbitals agree to ~1e-10 eV, accidental
/// near-degeneracies of substituted rings lie within a few 0.01 eV).
pub const DEGENERATE_EV: f64 = 0.05;

/// Squared frontier coefficients at the anchor of every site of `f`, from the SCF solution `r`
/// of its capped molecule (the fragment with its dummies removed: atom indices shift down past
/// each dummy; `site_atom` maps π sites to those atoms).
fn anchor_amplitudes(f: &Fragment, site_atom: &[usize], r: &ScfResult) -> (Vec<f64>, Vec<f64>) {
    if r.nocc == 0 || r.nocc >= r.energies.len() {
        return (vec![0.0; f.site_count()], vec![0.0; f.site_count()]);
    }
    let (h, l) = (r.energies[r.nocc - 1], r.energies[r.nocc]);
    let homos: Vec<usize> = (0..r.nocc)
        .filter(|&k| (r.energies[k] - h).abs() < DEGENERATE_EV)
        .collect();
    let lumos: Vec<usize> = (r.nocc..r.energies.len())
        .filter(|&k| (r.energies[k] - l).abs() < DEGENERATE_EV)
        .collect();
    let dummies: Vec<usize> = f.sites.iter().map(|s| s.dummy.index()).collect();
    let mut hh = Vec::new();
    let mut ll = Vec::new();
    for site in &f.sites {
        let a = site.anchor.index();
        let shifted = a - dummies.iter().filter(|&&d| d < a).count();
        let amp = |orbs: &[usize]| -> f64 {
            site_atom
                .iter()
                .position(|&x| x == shifted)
                .map_or(0.0, |s| {
                    orbs.iter().map(|&k| r.coeffs[(s, k)].powi(2)).sum()
                })
        };
        hh.push(amp(&homos));
        ll.push(amp(&lumos));
    }
    (hh, ll)
}

/// The phenyl probe as a fragment (parsed from [`PROBE_SMILES`] by the fragment loader).
fn probe_fragment() -> crate::fragments::Fragment {
    let text = format!(
        "[[fragment]]\nid = \"probe-phenyl\"\nname = \"phenyl\"\nrole = \"acceptor\"\n\
         smiles = \"{PROBE_SMILES}\"\nhandle = \"none\"\n"
    );
    crate::fragments::load_library(std::path::Path::new("<probe>"), &text)
        .ok()
        .and_then(|mut v| v.pop())
        .expect("the probe fragment is valid")
}

/// Compute the card of `f` with the parameter set `ppp`.
pub fn fragment_card(f: &Fragment, ppp: &PppParams) -> FragmentCard {
    // The combiner's own assembly builds the capped fragment and the probe dimers.
    let lib = Library {
        fragments: vec![f.clone(), probe_fragment()],
    };
    let capped = assemble(
        &lib,
        &Tuple {
            architecture: Architecture::DA,
            core: 0,
            arms: vec![Arm::H; f.site_count()].into(),
        },
    );
    // One SCF of the capped fragment gives its levels and its anchor amplitudes.
    let ((homo, lumo, s1, t1), (anchor_homo2, anchor_lumo2)) = match planar_scf(&capped.mol, ppp) {
        Ok((b, r)) => (
            local_levels(&b, &r, ppp),
            anchor_amplitudes(f, &b.site_atom, &r),
        ),
        Err(_) => (
            (f64::NAN, f64::NAN, f64::NAN, f64::NAN),
            (vec![0.0; f.site_count()], vec![0.0; f.site_count()]),
        ),
    };
    let sites = (0..f.site_count())
        .map(|s| {
            let mut arms = vec![Arm::H; f.site_count()];
            arms[s] = Arm::Terminal(1);
            let c = assemble(
                &lib,
                &Tuple {
                    architecture: Architecture::DA,
                    core: 0,
                    arms: arms.into(),
                },
            );
            site_profile(&c, ppp)
        })
        .collect();
    FragmentCard {
        id: f.id.clone(),
        role: f.role,
        homo_ev: homo,
        lumo_ev: lumo,
        s1_ev: s1,
        t1_ev: t1,
        sites,
        anchor_homo2,
        anchor_lumo2,
    }
}

/// The raw scan of the one link of a probe dimer.
fn site_profile(c: &crate::model::Candidate, ppp: &PppParams) -> Option<SiteProfile> {
    let link = c.links.first()?;
    let (a, b) = c.mol.graph.edge_endpoints(link.bond)?;
    let (a, b) = (a.index(), b.index());
    // Links sharing an atom with the probe link (the other rings of a triarylamine or
    // triarylborane propeller) start where the π tier starts them, not planar.
    let mut base = layout(&c.mol);
    for (x, y) in crate::pi::estimate::links(&c.mol) {
        if (x, y) != (a, b) && (x, y) != (b, a) && [x, y].iter().any(|z| *z == a || *z == b) {
            rotate_about_bond(
                &c.mol,
                &mut base.points,
                x,
                y,
                crate::pi::estimate::PROPELLER_START_DEG.to_radians(),
            );
        }
    }
    // A site whose probe link cannot twist (ring bond) or whose SCF fails has no profile.
    let raw = raw_scan_with(&c.mol, (a, b), &GRID_DEG, ppp, true, &base).ok()?;
    if raw.len() != GRID_DEG.len() || raw.iter().any(|r| !r.1.is_finite() || !r.2.is_finite()) {
        return None;
    }
    let mut p = SiteProfile {
        e_pi: [0.0; 13],
        e_steric: [0.0; 13],
    };
    for (k, r) in raw.iter().enumerate() {
        p.e_pi[k] = r.1;
        p.e_steric[k] = r.2;
    }
    Some(p)
}

/// The probe joined to itself (biphenyl): the reference subtracted in the additive pair model.
pub fn reference_profile(ppp: &PppParams) -> Option<SiteProfile> {
    let lib = Library {
        fragments: vec![probe_fragment()],
    };
    let c = assemble(
        &lib,
        &Tuple {
            architecture: Architecture::DA,
            core: 0,
            arms: vec![Arm::Terminal(0)].into(),
        },
    );
    site_profile(&c, ppp)
}

/// Equilibrium twist (degrees) and Boltzmann ⟨cos²θ⟩ of a link between two sites.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PairTwist {
    pub theta_deg: f32,
    pub cos2: f32,
    /// The two sites' dimer in the card set's pair table (`PairTable::entries`; 0 = none):
    /// kept beside the twist so an arm's link gives both in one look-up.
    pub dimer: u32,
    /// First-order mixing across the link ([`link_mixing`]): hole (HOMO with HOMO) and
    /// electron (LUMO with LUMO); symmetric in the two sites, tabulated so the hot path takes
    /// no division.
    pub mix_homo: f32,
    pub mix_lumo: f32,
}

/// First-order mixing across a link between fragments `x` and `y` at ⟨cos²θ⟩^½ = `rms_cos`:
/// hole delocalisation (HOMO with HOMO) and electron delocalisation (LUMO with LUMO), each
/// β·√⟨cos²θ⟩·|c_x|·|c_y|/|Δε| with the anchor coefficients `c` and the fragments' orbital
/// energies `ε` (denominator at least [`super::features::MIN_DENOMINATOR_EV`]).
pub fn link_mixing(
    (homo_x, lumo_x, ch_x, cl_x): (f64, f64, f64, f64),
    (homo_y, lumo_y, ch_y, cl_y): (f64, f64, f64, f64),
    rms_cos: f64,
) -> (f64, f64) {
    use super::features::{BETA_SCALE_EV, MIN_DENOMINATOR_EV};
    let dh = (homo_x - homo_y).abs().max(MIN_DENOMINATOR_EV);
    let dl = (lumo_x - lumo_y).abs().max(MIN_DENOMINATOR_EV);
    (
        BETA_SCALE_EV * rms_cos * ch_x * ch_y / dh,
        BETA_SCALE_EV * rms_cos * cl_x * cl_y / dl,
    )
}

/// The additive pair model (module docs) for sites `x` and `y` (None = probe-like), with the
/// mixing amplitudes left at zero (the card set fills them).
pub fn pair_twist(
    x: Option<&SiteProfile>,
    y: Option<&SiteProfile>,
    reference: &SiteProfile,
    tp: &TorsionParams,
) -> PairTwist {
    pair_twist_rms(x, y, reference, tp).0
}

/// [`pair_twist`] and √⟨cos²θ⟩ (rounded to single precision, the table's precision).
fn pair_twist_rms(
    x: Option<&SiteProfile>,
    y: Option<&SiteProfile>,
    reference: &SiteProfile,
    tp: &TorsionParams,
) -> (PairTwist, f32) {
    let x = x.unwrap_or(reference);
    let y = y.unwrap_or(reference);
    let raw: Vec<(f64, f64, f64)> = (0..GRID_DEG.len())
        .map(|k| {
            (
                GRID_DEG[k],
                x.e_pi[k] + y.e_pi[k] - reference.e_pi[k],
                x.e_steric[k] + y.e_steric[k] - reference.e_steric[k],
            )
        })
        .collect();
    let prof = profile(&raw, tp);
    let cos2: f64 = prof
        .points
        .iter()
        .map(|p| p.weight * p.theta_deg.to_radians().cos().powi(2))
        .sum();
    (
        PairTwist {
            theta_deg: prof.equilibrium_deg as f32,
            cos2: cos2 as f32,
            dimer: 0,
            mix_homo: 0.0,
            mix_lumo: 0.0,
        },
        cos2.sqrt() as f32,
    )
}

/// Every card of a library plus the dense site-pair twist table and the pair table of
/// donor–acceptor, donor–bridge and bridge–acceptor dimers ([`super::pairs`]).
#[derive(Debug, Clone)]
pub struct CardSet {
    pub cards: Vec<FragmentCard>,
    /// First global site index of each fragment.
    pub site_offset: Vec<usize>,
    pub n_sites: usize,
    /// `pairs[i * n_sites + j]` for global site indices i, j.
    pub pairs: Vec<PairTwist>,
    /// π-tier values of every dimer of the fragments asked for.
    pub pair_table: PairTable,
    /// What a tuple none of whose dimers is known gets: the mean of the known entries.
    pub pair_fallback: PairEntry,
}

impl CardSet {
    /// Cards of every fragment of `lib` (in library order) with the parameter set `ppp`, the
    /// twist table and the pair table of all its donors, acceptors and bridges at
    /// `temperature_k` (dimers from the shipped cache where it applies, the rest estimated).
    /// None when the probe itself cannot be scanned (a parameter set without aromatic carbon).
    pub fn for_library(lib: &Library, ppp: &PppParams, temperature_k: f64) -> Option<CardSet> {
        let cache = PairCache::shipped();
        CardSet::for_library_with(lib, ppp, temperature_k, &|_| true, Some(&cache))
    }

    /// As [`Self::for_library`], pairing only the fragments `wanted` selects (a workflow's
    /// include and exclude lists) and reading dimers from `cache` where it applies: cards are
    /// computed for every fragment (cheap), dimers only for those.
    pub fn for_library_with(
        lib: &Library,
        ppp: &PppParams,
        temperature_k: f64,
        wanted: &(dyn Fn(usize) -> bool + Sync),
        cache: Option<&PairCache>,
    ) -> Option<CardSet> {
        use rayon::prelude::*;
        let reference = reference_profile(ppp)?;
        let cards = lib
            .fragments
            .par_iter()
            .map(|f| fragment_card(f, ppp))
            .collect();
        let mut site_offset = Vec::with_capacity(lib.fragments.len());
        let mut n = 0;
        for f in &lib.fragments {
            site_offset.push(n);
            n += f.site_count();
        }
        let params = EstimateParams {
            temperature_k,
            ..EstimateParams::default()
        };
        let table = PairTable::build(lib, &site_offset, n, ppp, &params, wanted, cache);
        Some(CardSet::new(
            cards,
            &reference,
            &ppp.torsion_params(temperature_k),
            table,
        ))
    }

    /// Assemble the set from cards computed in library order and tabulate every site pair.
    pub fn new(
        cards: Vec<FragmentCard>,
        reference: &SiteProfile,
        tp: &TorsionParams,
        pair_table: PairTable,
    ) -> CardSet {
        let mut site_offset = Vec::with_capacity(cards.len());
        let mut all: Vec<Option<&SiteProfile>> = Vec::new();
        for c in &cards {
            site_offset.push(all.len());
            all.extend(c.sites.iter().map(|s| s.as_ref()));
        }
        let n = all.len();
        assert_eq!(pair_table.n_sites, n, "pair table numbered like the cards");
        // Per site: its fragment's HOMO and LUMO energies and the |HOMO|, |LUMO| coefficients
        // at the anchor.
        let site_orbitals: Vec<(f64, f64, f64, f64)> = cards
            .iter()
            .flat_map(|c| {
                c.anchor_homo2
                    .iter()
                    .zip(&c.anchor_lumo2)
                    .map(|(h2, l2)| (c.homo_ev, c.lumo_ev, h2.sqrt(), l2.sqrt()))
            })
            .collect();
        let mut pairs: Vec<PairTwist> = Vec::with_capacity(n * n);
        for i in 0..n {
            for j in 0..n {
                pairs.push(if j < i {
                    pairs[j * n + i]
                } else {
                    let (mut p, rms_cos) = pair_twist_rms(all[i], all[j], reference, tp);
                    // At most one order of a site pair has a dimer (donor side first).
                    p.dimer = pair_table.index[i * n + j].max(pair_table.index[j * n + i]);
                    let (h, l) = link_mixing(site_orbitals[i], site_orbitals[j], rms_cos as f64);
                    (p.mix_homo, p.mix_lumo) = (h as f32, l as f32);
                    p
                });
            }
        }
        let pair_fallback = pair_table.mean_entry();
        CardSet {
            cards,
            site_offset,
            n_sites: n,
            pairs,
            pair_table,
            pair_fallback,
        }
    }

    /// The tabulated twist of the link between site `si` of fragment `fi` and site `sj` of
    /// fragment `fj`.
    #[inline]
    pub fn pair(&self, fi: usize, si: usize, fj: usize, sj: usize) -> PairTwist {
        let i = self.site_offset[fi] + si;
        let j = self.site_offset[fj] + sj;
        self.pairs[i * self.n_sites + j]
    }
}
