//! Synthesis effort: coupling-reaction class of each inter-fragment bond, step count, effort
//! score and reagent cautions.
//!
//! Pure functions of an assembled [`Candidate`] and the fragment [`Library`] (for `on_shelf`
//! and the coupling handles). Nothing here is a route plan or safety data: the output names
//! the coupling a chemist would usually try first for each bond, the reagent classes it
//! involves, and cautions for those classes, always with [`GENERAL_NOTICE`].
//!
//! # Bond classes (common practice, see `science.md` §i of the design notes)
//!
//! | bond (after coupling) | class | alternatives |
//! |---|---|---|
//! | C(aryl)–N(amine, carbazole-type), aryl ring activated | SNAr (aryl fluoride + N–H, base) | Buchwald–Hartwig, Ullmann-type |
//! | C(aryl)–N, ring not activated | Buchwald–Hartwig amination (Pd, phosphine, alkoxide base) | Ullmann-type (Cu) |
//! | C(aryl)–C(aryl) | Suzuki–Miyaura (Pd, boronic acid/ester + aryl halide, base) | — |
//! | C(aryl)–B(three-coordinate) | aryl-lithium or Grignard + haloborane | — |
//! | anything else, or a fragment whose library handle is `none` | unclassified, with the reason | — |
//!
//! "Aryl" carbon: a ring carbon that is aromatic or carries a ring double bond (Kekulé-written
//! azine cores such as heptazine count). "Amine" nitrogen: neutral, three heavy neighbours, no
//! non-aromatic multiple bond (diarylamines, carbazoles, acridans, phenoxazines, indoles).
//!
//! **Activation rule for SNAr** (ours, after the usual textbook statement that SNAr needs
//! strong electron-withdrawing groups ortho or para to the leaving group; example in
//! Org. Synth. 96, 455–473 (2019)): the aryl carbon of the C–N bond lies on a six-membered ring
//! and an ortho or para ring position carries a nitrile, nitro, sulfonyl (S with two oxygens)
//! or carbonyl (C=O) substituent, or is itself a pyridine-type ring nitrogen (azine 2-/4-
//! positions, pyrimidin-2-yl, triazinyl). The leaving group (fluoride; chloride on azines) is a
//! property of the precursor, not of the product, and is not checked. Phosphine oxides,
//! boranes, halogens and five-membered rings do not count.
//!
//! # Steps and effort (our conventions, not literature values)
//!
//! * **Steps** = number of distinct coupling operations: bonds with the same class between the
//!   same pair of fragment ids are made in one step (a symmetric multi-arm coupling such as two
//!   identical donors on a two-site acceptor, or four on a tetrafluoro core, is one step with
//!   excess nucleophile). Different arms on one core are separate steps. The order of steps,
//!   protecting groups and the synthesis of the fragments themselves are not counted.
//! * **Shelf**: a fragment is on the shelf when its library entry says `on_shelf = true`; an id
//!   missing from the library counts as off the shelf.
//! * **Effort** = steps + `off_shelf_penalty` × (distinct off-shelf fragment ids) + Σ over steps
//!   of the class penalty (defaults: SNAr 0, Buchwald–Hartwig 0, Suzuki–Miyaura 0, Ullmann 0.5,
//!   organometallic borylation 1.0 for air- and moisture-free work at low temperature,
//!   unclassified 2.0 for a bond with no standard coupling). One unit ≈ one routine step.
//!
//! # Cautions
//!
//! For the reagent classes of the chosen class of each bond (alternatives are listed, not
//! cautioned): palladium catalysts, phosphine ligands, strong bases, copper, organolithium /
//! Grignard reagents, haloboranes, dipolar aprotic solvents; and, for every unit that carries
//! a nitrile, that nitriles are often installed with cyanide sources. The notice
//! [`GENERAL_NOTICE`] is always attached.

use std::collections::{BTreeMap, BTreeSet};

use serde::{Deserialize, Serialize};

use crate::chem::{AtomIdx, BondOrder, Molecule, element, rings};
use crate::fragments::{Handle, Library};
use crate::model::Candidate;

/// Attached to every plan.
pub const GENERAL_NOTICE: &str = "These are estimates from structure rules, not a route plan \
and not safety data. Before any work, consult the safety data sheets of every substance, your \
institution's chemical hygiene plan and local regulations, and work under qualified supervision.";

/// The coupling a chemist would usually run for a bond.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CouplingClass {
    /// Pd-catalysed C–N coupling of an aryl halide with an N–H amine or azole.
    BuchwaldHartwig,
    /// Cu-mediated C–N coupling (Ullmann–Goldberg type).
    Ullmann,
    /// Nucleophilic aromatic substitution of an activated aryl fluoride (or azinyl chloride).
    Snar,
    /// Pd-catalysed aryl–aryl coupling of an aryl halide with a boronic acid or ester.
    SuzukiMiyaura,
    /// Aryl-lithium or aryl-Grignard from an aryl halide, quenched with a haloborane.
    OrganometallicBorylation,
    Unclassified,
}

impl CouplingClass {
    pub fn as_str(self) -> &'static str {
        match self {
            CouplingClass::BuchwaldHartwig => "buchwald_hartwig",
            CouplingClass::Ullmann => "ullmann",
            CouplingClass::Snar => "snar",
            CouplingClass::SuzukiMiyaura => "suzuki_miyaura",
            CouplingClass::OrganometallicBorylation => "organometallic_borylation",
            CouplingClass::Unclassified => "unclassified",
        }
    }

    /// The reagent classes a typical run involves.
    pub fn reagents(self) -> Vec<ReagentClass> {
        use ReagentClass::*;
        match self {
            CouplingClass::BuchwaldHartwig => vec![
                ArylHalide,
                AmineNH,
                PalladiumCatalyst,
                PhosphineLigand,
                StrongBase,
            ],
            CouplingClass::Ullmann => vec![
                ArylHalide,
                AmineNH,
                CopperCatalyst,
                CarbonateOrPhosphateBase,
                DipolarAproticSolvent,
            ],
            CouplingClass::Snar => vec![
                ActivatedArylFluoride,
                AmineNH,
                StrongBase,
                DipolarAproticSolvent,
            ],
            CouplingClass::SuzukiMiyaura => vec![
                ArylHalide,
                BoronicAcidOrEster,
                PalladiumCatalyst,
                PhosphineLigand,
                CarbonateOrPhosphateBase,
            ],
            CouplingClass::OrganometallicBorylation => {
                vec![ArylHalide, Organolithium, GrignardReagent, Haloborane]
            }
            CouplingClass::Unclassified => vec![],
        }
    }
}

/// A class of reagents.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ReagentClass {
    ArylHalide,
    ActivatedArylFluoride,
    AmineNH,
    BoronicAcidOrEster,
    PalladiumCatalyst,
    PhosphineLigand,
    CopperCatalyst,
    /// Alkoxides (NaOtBu, KOtBu), metal hydrides (NaH) and amides (NaHMDS).
    StrongBase,
    CarbonateOrPhosphateBase,
    /// DMF, DMAc, NMP, DMSO.
    DipolarAproticSolvent,
    Organolithium,
    GrignardReagent,
    Haloborane,
}

/// What a caution is about.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CautionCode {
    PalladiumCatalyst,
    PhosphineLigand,
    StrongBase,
    CopperCatalyst,
    DipolarAproticSolvent,
    OrganolithiumPyrophoric,
    Haloborane,
    CyanideSourceForNitrile,
}

impl CautionCode {
    pub fn text(self) -> &'static str {
        match self {
            CautionCode::PalladiumCatalyst => {
                "Palladium catalysts: palladium compounds can be irritants and sensitisers; \
                 finely divided palladium formed in reactions can ignite solvent vapours; \
                 residual palladium is heavy-metal waste and is usually removed from device \
                 materials."
            }
            CautionCode::PhosphineLigand => {
                "Phosphine ligands: many are air-sensitive and toxic, and some trialkylphosphines \
                 (e.g. tri-tert-butylphosphine) are pyrophoric; handle under inert atmosphere."
            }
            CautionCode::StrongBase => {
                "Strong bases (NaOtBu, KOtBu, NaH, NaHMDS): corrosive and moisture-sensitive; \
                 sodium hydride releases flammable hydrogen with water and protic solvents."
            }
            CautionCode::CopperCatalyst => {
                "Copper reagents (Ullmann-type couplings): copper salts are harmful and toxic to \
                 aquatic life; these couplings often run hot in high-boiling solvents."
            }
            CautionCode::DipolarAproticSolvent => {
                "Dipolar aprotic solvents (DMF, DMAc, NMP): several are classified as \
                 reproductive toxicants; DMSO carries dissolved substances through skin."
            }
            CautionCode::OrganolithiumPyrophoric => {
                "Organolithium reagents (n-, s-, t-butyllithium) are pyrophoric and react \
                 violently with water; Grignard reagents and their ether solvents are flammable \
                 and moisture-sensitive. Inert atmosphere, dry solvents, low temperature and \
                 trained handling only."
            }
            CautionCode::Haloborane => {
                "Haloboranes (e.g. fluorodimesitylborane, boron trihalides) are \
                 moisture-sensitive and can release corrosive hydrogen halides on hydrolysis."
            }
            CautionCode::CyanideSourceForNitrile => {
                "Nitrile-bearing fragment: if it is made in-house, the cyano group is often \
                 installed with cyanide sources (copper(I) cyanide, zinc cyanide, potassium \
                 hexacyanoferrate(II)); cyanide salts are acutely toxic and release hydrogen \
                 cyanide with acids."
            }
        }
    }
}

/// A caution with what it applies to (bond descriptions or fragment ids).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Caution {
    pub code: CautionCode,
    pub text: &'static str,
    pub applies_to: Vec<String>,
}

/// The classification of one inter-fragment bond.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BondPlan {
    /// Index into `Candidate::links`.
    pub link: usize,
    /// The two units (indices into `Candidate::units`) and their fragment ids.
    pub units: (usize, usize),
    pub fragment_ids: (String, String),
    /// Element symbols of the two bonded atoms, in unit order.
    pub atoms: (String, String),
    pub class: CouplingClass,
    pub alternatives: Vec<CouplingClass>,
    pub reagents: Vec<ReagentClass>,
    /// The unit that carries the electrophile (halide, fluoride or haloborane), when known.
    pub electrophile_unit: Option<usize>,
    /// Activating features found for SNAr (e.g. `para nitrile`, `ortho ring N`).
    pub activation: Vec<String>,
    /// Why this class (or why unclassified).
    pub reason: String,
}

/// One coupling operation (bonds made together).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Step {
    pub class: CouplingClass,
    /// Indices into `SynthPlan::bonds`.
    pub bonds: Vec<usize>,
    /// The two fragment ids joined (sorted).
    pub fragment_ids: (String, String),
}

/// Availability of one fragment id.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FragmentSupply {
    pub id: String,
    /// `None` when the id is not in the library (counted as off the shelf).
    pub on_shelf: Option<bool>,
}

/// Penalties of the effort score (see the module documentation).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct EffortParams {
    pub off_shelf_penalty: f64,
    pub snar_penalty: f64,
    pub buchwald_hartwig_penalty: f64,
    pub suzuki_miyaura_penalty: f64,
    pub ullmann_penalty: f64,
    pub borylation_penalty: f64,
    pub unclassified_penalty: f64,
}

impl Default for EffortParams {
    fn default() -> Self {
        EffortParams {
            off_shelf_penalty: 1.0,
            snar_penalty: 0.0,
            buchwald_hartwig_penalty: 0.0,
            suzuki_miyaura_penalty: 0.0,
            ullmann_penalty: 0.5,
            borylation_penalty: 1.0,
            unclassified_penalty: 2.0,
        }
    }
}

impl EffortParams {
    pub fn class_penalty(&self, c: CouplingClass) -> f64 {
        match c {
            CouplingClass::Snar => self.snar_penalty,
            CouplingClass::BuchwaldHartwig => self.buchwald_hartwig_penalty,
            CouplingClass::SuzukiMiyaura => self.suzuki_miyaura_penalty,
            CouplingClass::Ullmann => self.ullmann_penalty,
            CouplingClass::OrganometallicBorylation => self.borylation_penalty,
            CouplingClass::Unclassified => self.unclassified_penalty,
        }
    }
}

/// The effort score and its terms.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Effort {
    pub steps: usize,
    pub off_shelf: usize,
    pub off_shelf_term: f64,
    pub class_term: f64,
    /// steps + off_shelf_term + class_term.
    pub total: f64,
}

/// Everything `synth` says about one candidate.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SynthPlan {
    pub bonds: Vec<BondPlan>,
    pub steps: Vec<Step>,
    /// Distinct fragment ids in unit order of first appearance.
    pub fragments: Vec<FragmentSupply>,
    pub effort: Effort,
    pub cautions: Vec<Caution>,
    pub notice: &'static str,
}

/// Per-molecule facts the classifier needs, computed once.
struct Perceived {
    ring_bond: Vec<bool>,
}

impl Perceived {
    fn of(mol: &Molecule) -> Self {
        Perceived {
            ring_bond: rings::ring_bonds(mol),
        }
    }

    fn in_ring(&self, mol: &Molecule, a: AtomIdx) -> bool {
        mol.neighbours(a).any(|(_, e)| self.ring_bond[e.index()])
    }
}

fn is_aryl_carbon(mol: &Molecule, p: &Perceived, a: AtomIdx) -> bool {
    let at = mol.atom(a);
    at.element == 6
        && p.in_ring(mol, a)
        && (at.aromatic
            || mol
                .neighbours(a)
                .any(|(_, e)| p.ring_bond[e.index()] && mol.bond(e).order == BondOrder::Double))
}

fn is_amine_nitrogen(mol: &Molecule, a: AtomIdx) -> bool {
    let at = mol.atom(a);
    at.element == 7
        && at.charge == 0
        && mol.heavy_degree(a) == 3
        && mol.neighbours(a).all(|(_, e)| {
            let b = mol.bond(e);
            b.aromatic || b.order == BondOrder::Single
        })
}

fn is_borane_boron(mol: &Molecule, a: AtomIdx) -> bool {
    let at = mol.atom(a);
    at.element == 5 && at.charge == 0 && mol.heavy_degree(a) == 3
}

/// Six-membered rings through `c` (as atom paths starting at `c`), over ring bonds.
fn six_rings(mol: &Molecule, p: &Perceived, c: AtomIdx) -> Vec<[AtomIdx; 6]> {
    let mut out = Vec::new();
    let mut path = vec![c];
    fn walk(mol: &Molecule, p: &Perceived, path: &mut Vec<AtomIdx>, out: &mut Vec<[AtomIdx; 6]>) {
        let last = *path.last().expect("path starts with c");
        for (n, e) in mol.neighbours(last) {
            if !p.ring_bond[e.index()] {
                continue;
            }
            if path.len() == 6 {
                if n == path[0] {
                    let mut r = [path[0]; 6];
                    r.copy_from_slice(path);
                    out.push(r);
                }
                continue;
            }
            if path.contains(&n) {
                continue;
            }
            path.push(n);
            walk(mol, p, path, out);
            path.pop();
        }
    }
    walk(mol, p, &mut path, &mut out);
    out
}

/// Activating features ortho/para to `c` (see the module documentation).
fn activation(mol: &Molecule, p: &Perceived, c: AtomIdx) -> Vec<String> {
    let mut found = BTreeSet::new();
    for ring in six_rings(mol, p, c) {
        for (pos, label) in [(1usize, "ortho"), (5, "ortho"), (3, "para")] {
            let a = ring[pos];
            let at = mol.atom(a);
            if at.element == 7
                && at.charge == 0
                && mol.total_hydrogens(a) == 0
                && mol.heavy_degree(a) == 2
            {
                found.insert(format!("{label} ring N"));
            }
            for (s, _) in mol.neighbours(a) {
                if ring.contains(&s) {
                    continue;
                }
                if let Some(g) = ewg(mol, s) {
                    found.insert(format!("{label} {g}"));
                }
            }
        }
    }
    found.into_iter().collect()
}

/// The strong electron-withdrawing group that substituent atom `s` starts, if any.
fn ewg(mol: &Molecule, s: AtomIdx) -> Option<&'static str> {
    let at = mol.atom(s);
    let to = |el: u8, order: BondOrder| {
        mol.neighbours(s)
            .filter(|&(n, e)| mol.atom(n).element == el && mol.bond(e).order == order)
            .count()
    };
    let o_neighbours = mol
        .neighbours(s)
        .filter(|&(n, _)| mol.atom(n).element == 8)
        .count();
    match at.element {
        6 if to(7, BondOrder::Triple) > 0 => Some("nitrile"),
        6 if !at.aromatic && to(8, BondOrder::Double) > 0 => Some("carbonyl"),
        7 if o_neighbours >= 2 => Some("nitro"),
        16 if to(8, BondOrder::Double) >= 2 => Some("sulfonyl"),
        _ => None,
    }
}

/// Classify the bond of `c.links[link]`. With a library, a fragment whose handle is `none`
/// makes the bond unclassified (the library says it is not introduced by a coupling).
pub fn classify_link(c: &Candidate, link: usize, lib: Option<&Library>) -> BondPlan {
    let p = Perceived::of(&c.mol);
    classify(c, &p, link, lib)
}

fn classify(c: &Candidate, p: &Perceived, link: usize, lib: Option<&Library>) -> BondPlan {
    let mol = &c.mol;
    let l = c.links[link];
    let (x, y) = mol
        .graph
        .edge_endpoints(l.bond)
        .expect("link bonds exist in the molecule");
    // Put the atoms in the order of `l.units`.
    let (x, y) = if c.atom_unit[x.index()] == l.units.0 {
        (x, y)
    } else {
        (y, x)
    };
    let (ux, uy) = (l.units.0, l.units.1);
    let id = |u: usize| c.units[u].fragment_id.clone();
    let mut plan = BondPlan {
        link,
        units: (ux, uy),
        fragment_ids: (id(ux), id(uy)),
        atoms: (
            element::symbol(mol.atom(x).element).to_string(),
            element::symbol(mol.atom(y).element).to_string(),
        ),
        class: CouplingClass::Unclassified,
        alternatives: vec![],
        reagents: vec![],
        electrophile_unit: None,
        activation: vec![],
        reason: String::new(),
    };
    if let Some(lib) = lib {
        for u in [ux, uy] {
            if let Some(f) = lib.get(&c.units[u].fragment_id)
                && f.handle == Handle::None
            {
                plan.reason = format!(
                    "fragment {} has no coupling handle in the library{}",
                    f.id,
                    f.note
                        .as_deref()
                        .map(|n| format!(" ({n})"))
                        .unwrap_or_default()
                );
                return plan;
            }
        }
    }
    let (ax, ay) = (is_aryl_carbon(mol, p, x), is_aryl_carbon(mol, p, y));
    let set = |plan: &mut BondPlan, class: CouplingClass, alts: Vec<CouplingClass>| {
        plan.class = class;
        plan.reagents = class.reagents();
        plan.alternatives = alts;
    };
    if (ax && is_amine_nitrogen(mol, y)) || (ay && is_amine_nitrogen(mol, x)) {
        let (carbon, cu) = if ax { (x, ux) } else { (y, uy) };
        plan.electrophile_unit = Some(cu);
        plan.activation = activation(mol, p, carbon);
        if plan.activation.is_empty() {
            set(
                &mut plan,
                CouplingClass::BuchwaldHartwig,
                vec![CouplingClass::Ullmann],
            );
            plan.reason = "C(aryl)–N(amine/azole), aryl ring not activated for SNAr".into();
        } else {
            set(
                &mut plan,
                CouplingClass::Snar,
                vec![CouplingClass::BuchwaldHartwig, CouplingClass::Ullmann],
            );
            plan.reason = format!(
                "C(aryl)–N(amine/azole) on an activated ring ({})",
                plan.activation.join(", ")
            );
        }
    } else if ax && ay {
        set(&mut plan, CouplingClass::SuzukiMiyaura, vec![]);
        plan.reason = "C(aryl)–C(aryl)".into();
    } else if (ax && is_borane_boron(mol, y)) || (ay && is_borane_boron(mol, x)) {
        set(&mut plan, CouplingClass::OrganometallicBorylation, vec![]);
        plan.electrophile_unit = Some(if ax { uy } else { ux });
        plan.reason = "C(aryl)–B(three-coordinate borane)".into();
    } else {
        let (ex, ey) = (mol.atom(x).element, mol.atom(y).element);
        let kind = |a: AtomIdx, aryl: bool| {
            if aryl {
                "C(aryl)".to_string()
            } else {
                element::symbol(mol.atom(a).element).to_string()
            }
        };
        plan.reason = if (ax && ey == 14) || (ay && ex == 14) {
            "C(aryl)–Si: usually a silylation of an aryl-lithium or Grignard with a \
             chlorosilane; not a coupling class here"
                .into()
        } else if (ax && ey == 6) || (ay && ex == 6) {
            "C(aryl)–C(sp3): alkyl groups are usually built into a precursor or introduced \
             by Friedel–Crafts alkylation, not by a coupling"
                .into()
        } else {
            format!(
                "no coupling rule for a {}–{} bond",
                kind(x, ax),
                kind(y, ay)
            )
        };
    }
    plan
}

fn has_nitrile(mol: &Molecule, atom_unit: &[usize], u: usize) -> bool {
    mol.atoms().any(|a| {
        atom_unit[a.index()] == u
            && mol.atom(a).element == 6
            && mol
                .neighbours(a)
                .any(|(n, e)| mol.atom(n).element == 7 && mol.bond(e).order == BondOrder::Triple)
    })
}

/// Classify every inter-fragment bond of `c`, count steps, look up shelf availability, score
/// the effort and collect cautions (see the module documentation).
///
/// Complexity O(links · (ring walk)) plus one ring perception of the molecule.
pub fn plan(c: &Candidate, lib: &Library, params: &EffortParams) -> SynthPlan {
    let p = Perceived::of(&c.mol);
    let bonds: Vec<BondPlan> = (0..c.links.len())
        .map(|l| classify(c, &p, l, Some(lib)))
        .collect();
    // Steps: same class between the same fragment-id pair (ordered electrophile side first
    // when known) is one operation.
    let mut groups: BTreeMap<(CouplingClass, String, String), Vec<usize>> = BTreeMap::new();
    for (i, b) in bonds.iter().enumerate() {
        let (a, z) = (b.fragment_ids.0.clone(), b.fragment_ids.1.clone());
        let key = if a <= z {
            (b.class, a, z)
        } else {
            (b.class, z, a)
        };
        groups.entry(key).or_default().push(i);
    }
    let mut steps: Vec<Step> = groups
        .into_iter()
        .map(|((class, a, z), bonds)| Step {
            class,
            bonds,
            fragment_ids: (a, z),
        })
        .collect();
    steps.sort_by_key(|s| s.bonds[0]);
    // Fragments.
    let mut seen = BTreeSet::new();
    let mut fragments = Vec::new();
    for u in &c.units {
        if seen.insert(u.fragment_id.clone()) {
            fragments.push(FragmentSupply {
                id: u.fragment_id.clone(),
                on_shelf: lib.get(&u.fragment_id).map(|f| f.on_shelf),
            });
        }
    }
    let off_shelf = fragments
        .iter()
        .filter(|f| f.on_shelf != Some(true))
        .count();
    let class_term: f64 = steps.iter().map(|s| params.class_penalty(s.class)).sum();
    let off_shelf_term = params.off_shelf_penalty * off_shelf as f64;
    let effort = Effort {
        steps: steps.len(),
        off_shelf,
        off_shelf_term,
        class_term,
        total: steps.len() as f64 + off_shelf_term + class_term,
    };
    // Cautions.
    let mut cautions: BTreeMap<CautionCode, BTreeSet<String>> = BTreeMap::new();
    for b in &bonds {
        let what = format!(
            "{} ({}–{})",
            b.class.as_str(),
            b.fragment_ids.0,
            b.fragment_ids.1
        );
        for r in &b.reagents {
            let code = match r {
                ReagentClass::PalladiumCatalyst => Some(CautionCode::PalladiumCatalyst),
                ReagentClass::PhosphineLigand => Some(CautionCode::PhosphineLigand),
                ReagentClass::StrongBase => Some(CautionCode::StrongBase),
                ReagentClass::CopperCatalyst => Some(CautionCode::CopperCatalyst),
                ReagentClass::DipolarAproticSolvent => Some(CautionCode::DipolarAproticSolvent),
                ReagentClass::Organolithium | ReagentClass::GrignardReagent => {
                    Some(CautionCode::OrganolithiumPyrophoric)
                }
                ReagentClass::Haloborane => Some(CautionCode::Haloborane),
                _ => None,
            };
            if let Some(code) = code {
                cautions.entry(code).or_default().insert(what.clone());
            }
        }
    }
    for (u, unit) in c.units.iter().enumerate() {
        if has_nitrile(&c.mol, &c.atom_unit, u) {
            cautions
                .entry(CautionCode::CyanideSourceForNitrile)
                .or_default()
                .insert(unit.fragment_id.clone());
        }
    }
    let cautions = cautions
        .into_iter()
        .map(|(code, set)| Caution {
            code,
            text: code.text(),
            applies_to: set.into_iter().collect(),
        })
        .collect();
    SynthPlan {
        bonds,
        steps,
        fragments,
        effort,
        cautions,
        notice: GENERAL_NOTICE,
    }
}
