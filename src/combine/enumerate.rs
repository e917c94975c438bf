//! Tuple generation, symmetry reduction and constraints.

use std::collections::BTreeSet;
use std::ops::ControlFlow;

use serde::{Deserialize, Serialize};

use crate::chem::element;
use crate::fragments::Library;
use crate::model::{Architecture, Provenance, Role};

/// What sits on one site of the core.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Arm {
    /// The site is capped with hydrogen.
    H,
    /// A one-site fragment (library index).
    Terminal(usize),
    /// A bridge (library index) joined to the core through its site `core_site` (0 or 1), the
    /// terminal fragment on its other site.
    Bridged {
        bridge: usize,
        core_site: u8,
        terminal: usize,
    },
}

/// A tuple's arms: inline for up to four core sites.
pub type Arms = smallvec::SmallVec<[Arm; 4]>;

/// One admitted combination.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Tuple {
    pub architecture: Architecture,
    pub core: usize,
    /// One arm per core site, in site order (inline up to four sites: no allocation per
    /// tuple; a core with more sites spills to the heap).
    pub arms: Arms,
}

impl Tuple {
    /// Site assignment as text, e.g. `1:carbazol-9-yl 2:H` or `1:1,4-phenylene[2]>carbazol-9-yl`
    /// (bridge joined to the core through its site 2).
    pub fn sites(&self, lib: &Library) -> String {
        let id = |i: usize| lib.fragments[i].id.as_str();
        self.arms
            .iter()
            .enumerate()
            .map(|(i, a)| match *a {
                Arm::H => format!("{}:H", i + 1),
                Arm::Terminal(f) => format!("{}:{}", i + 1, id(f)),
                Arm::Bridged {
                    bridge,
                    core_site,
                    terminal,
                } => format!(
                    "{}:{}[{}]>{}",
                    i + 1,
                    id(bridge),
                    core_site + 1,
                    id(terminal)
                ),
            })
            .collect::<Vec<_>>()
            .join(" ")
    }

    /// The tuple key: `architecture|core|sites`. Unique per tuple, stable across runs.
    pub fn key(&self, lib: &Library) -> String {
        format!(
            "{}|{}|{}",
            self.architecture,
            lib.fragments[self.core].id,
            self.sites(lib)
        )
    }

    /// Read a tuple back from its [`key`](Tuple::key) (as stored in a campaign's provenance).
    /// Fragment ids must exist in `lib`; the site count must match the core's.
    pub fn parse_key(lib: &Library, key: &str) -> Result<Tuple, String> {
        let mut parts = key.splitn(3, '|');
        let (arch, core, sites) = match (parts.next(), parts.next(), parts.next()) {
            (Some(a), Some(c), Some(s)) => (a, c, s),
            _ => {
                return Err(format!(
                    "tuple key '{key}': expected ARCHITECTURE|CORE|SITES"
                ));
            }
        };
        let architecture = Architecture::parse(arch)
            .ok_or_else(|| format!("tuple key '{key}': unknown architecture '{arch}'"))?;
        let idx = |id: &str| {
            lib.index_of(id)
                .ok_or_else(|| format!("tuple key '{key}': fragment '{id}' is not in the library"))
        };
        let core = idx(core)?;
        let mut arms = Vec::new();
        for (n, item) in sites.split(' ').enumerate() {
            let (site, arm) = item
                .split_once(':')
                .ok_or_else(|| format!("tuple key '{key}': site '{item}' lacks 'N:'"))?;
            if site.parse::<usize>().ok() != Some(n + 1) {
                return Err(format!(
                    "tuple key '{key}': site {} expected, found '{site}'",
                    n + 1
                ));
            }
            arms.push(if arm == "H" {
                Arm::H
            } else if let Some(p) = arm.find("]>") {
                // Ids may contain brackets but never '>': the bridge site is the bracket
                // closed by the only "]>".
                let open = arm[..p]
                    .rfind('[')
                    .ok_or_else(|| format!("tuple key '{key}': bridged arm '{arm}' malformed"))?;
                let (bridge, cs, terminal) = (&arm[..open], &arm[open + 1..p], &arm[p + 2..]);
                let core_site = match cs {
                    "1" => 0,
                    "2" => 1,
                    _ => {
                        return Err(format!(
                            "tuple key '{key}': bridge site '{cs}' is not 1 or 2"
                        ));
                    }
                };
                Arm::Bridged {
                    bridge: idx(bridge)?,
                    core_site,
                    terminal: idx(terminal)?,
                }
            } else {
                Arm::Terminal(idx(arm)?)
            });
        }
        if arms.len() != lib.fragments[core].site_count() {
            return Err(format!(
                "tuple key '{key}': {} arms for a core with {} sites",
                arms.len(),
                lib.fragments[core].site_count()
            ));
        }
        Ok(Tuple {
            architecture,
            core,
            arms: arms.into(),
        })
    }

    /// Fragment indices in slot order: core, then each arm's fragments.
    pub fn fragment_indices(&self) -> Vec<usize> {
        let mut v = vec![self.core];
        for a in &self.arms {
            match *a {
                Arm::H => {}
                Arm::Terminal(f) => v.push(f),
                Arm::Bridged {
                    bridge, terminal, ..
                } => {
                    v.push(bridge);
                    v.push(terminal);
                }
            }
        }
        v
    }

    pub fn provenance(&self, lib: &Library) -> Provenance {
        Provenance {
            architecture: self.architecture,
            tuple_key: self.key(lib),
            fragments: self
                .fragment_indices()
                .into_iter()
                .map(|i| lib.fragments[i].id.clone())
                .collect(),
            sites: self.sites(lib),
        }
    }

    /// Average molecular weight of the product, exact from fragment masses (g/mol).
    pub fn mol_weight(&self, lib: &Library) -> f64 {
        let h = element::standard_weight(1).expect("hydrogen tabulated");
        let caps = self.arms.iter().filter(|a| **a == Arm::H).count();
        self.fragment_indices()
            .into_iter()
            .map(|i| lib.fragments[i].mass_without_sites)
            .sum::<f64>()
            + caps as f64 * h
    }

    pub fn heavy_atoms(&self, lib: &Library) -> usize {
        self.fragment_indices()
            .into_iter()
            .map(|i| lib.fragments[i].heavy_atoms)
            .sum()
    }
}

/// Include/exclude lists for one role (empty include = all).
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RoleFilter {
    #[serde(default)]
    pub include: Vec<String>,
    #[serde(default)]
    pub exclude: Vec<String>,
}

impl RoleFilter {
    fn admits(&self, id: &str) -> bool {
        (self.include.is_empty() || self.include.iter().any(|x| x == id))
            && !self.exclude.iter().any(|x| x == id)
    }
}

/// Which donor assignments Dn–A generates.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum DnAMode {
    /// All donors on one core alike.
    Alike,
    /// Any combination of donors (includes the alike ones).
    Mixed,
}

/// Resolved enumeration settings.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EnumerateParams {
    pub architectures: Vec<Architecture>,
    pub donors: RoleFilter,
    pub acceptors: RoleFilter,
    pub bridges: RoleFilter,
    /// g/mol; default 1000, a common rule of thumb for vacuum deposition.
    pub max_mol_weight: f64,
    pub max_heavy_atoms: usize,
    /// Unordered pairs of fragment ids that may not occur in one molecule.
    pub forbidden_pairs: Vec<(String, String)>,
    /// If not empty: every donor–acceptor pair of a molecule must be listed.
    pub allowed_pairs: Vec<(String, String)>,
    pub dn_a_min: usize,
    pub dn_a_max: usize,
    pub dn_a_mode: DnAMode,
}

impl Default for EnumerateParams {
    fn default() -> Self {
        EnumerateParams {
            architectures: vec![Architecture::DA],
            donors: RoleFilter::default(),
            acceptors: RoleFilter::default(),
            bridges: RoleFilter::default(),
            max_mol_weight: 1000.0,
            max_heavy_atoms: 200,
            forbidden_pairs: Vec::new(),
            allowed_pairs: Vec::new(),
            dn_a_min: 2,
            dn_a_max: 5,
            dn_a_mode: DnAMode::Alike,
        }
    }
}

/// Why a tuple was not admitted.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Rejection {
    MolWeight,
    HeavyAtoms,
    ForbiddenPair,
    PairNotAllowed,
}

/// What the generator reports for each raw assignment it considers.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum TupleEvent {
    Admitted(Tuple),
    /// Not the orbit representative (an equivalent assignment is emitted instead).
    SymmetryEquivalent,
    Rejected(Rejection),
}

/// Counts per stage of generation.
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct Counts {
    /// Raw assignments considered.
    pub generated: u64,
    pub symmetry_equivalent: u64,
    pub rejected_mol_weight: u64,
    pub rejected_heavy_atoms: u64,
    pub rejected_forbidden_pair: u64,
    pub rejected_pair_not_allowed: u64,
    pub admitted: u64,
}

impl Counts {
    pub fn record(&mut self, e: &TupleEvent) {
        self.generated += 1;
        match e {
            TupleEvent::Admitted(_) => self.admitted += 1,
            TupleEvent::SymmetryEquivalent => self.symmetry_equivalent += 1,
            TupleEvent::Rejected(r) => match r {
                Rejection::MolWeight => self.rejected_mol_weight += 1,
                Rejection::HeavyAtoms => self.rejected_heavy_atoms += 1,
                Rejection::ForbiddenPair => self.rejected_forbidden_pair += 1,
                Rejection::PairNotAllowed => self.rejected_pair_not_allowed += 1,
            },
        }
    }

    pub fn add(&mut self, o: &Counts) {
        self.generated += o.generated;
        self.symmetry_equivalent += o.symmetry_equivalent;
        self.rejected_mol_weight += o.rejected_mol_weight;
        self.rejected_heavy_atoms += o.rejected_heavy_atoms;
        self.rejected_forbidden_pair += o.rejected_forbidden_pair;
        self.rejected_pair_not_allowed += o.rejected_pair_not_allowed;
        self.admitted += o.admitted;
    }
}

/// Generates tuples for a library and settings.
pub struct Enumerator<'a> {
    lib: &'a Library,
    params: &'a EnumerateParams,
    forbidden: BTreeSet<(usize, usize)>,
    allowed: BTreeSet<(usize, usize)>,
}

fn pair(a: usize, b: usize) -> (usize, usize) {
    (a.min(b), a.max(b))
}

impl<'a> Enumerator<'a> {
    /// Errors name unknown fragment ids in filters and pair lists.
    pub fn new(lib: &'a Library, params: &'a EnumerateParams) -> Result<Self, String> {
        let idx = |id: &str, what: &str| {
            lib.index_of(id)
                .ok_or_else(|| format!("{what}: unknown fragment id '{id}'"))
        };
        for (f, what) in [
            (&params.donors, "donors"),
            (&params.acceptors, "acceptors"),
            (&params.bridges, "bridges"),
        ] {
            for id in f.include.iter().chain(&f.exclude) {
                idx(id, what)?;
            }
        }
        let mut forbidden = BTreeSet::new();
        for (a, b) in &params.forbidden_pairs {
            forbidden.insert(pair(idx(a, "forbidden_pairs")?, idx(b, "forbidden_pairs")?));
        }
        let mut allowed = BTreeSet::new();
        for (a, b) in &params.allowed_pairs {
            allowed.insert(pair(idx(a, "allowed_pairs")?, idx(b, "allowed_pairs")?));
        }
        if params.dn_a_min < 2 || params.dn_a_max > 6 || params.dn_a_min > params.dn_a_max {
            return Err(format!(
                "Dn-A donor count range {}..{} must lie within 2..6",
                params.dn_a_min, params.dn_a_max
            ));
        }
        Ok(Enumerator {
            lib,
            params,
            forbidden,
            allowed,
        })
    }

    fn pick(&self, role: Role, sites: usize) -> Vec<usize> {
        let filter = match role {
            Role::Donor => &self.params.donors,
            Role::Acceptor => &self.params.acceptors,
            Role::Bridge => &self.params.bridges,
            Role::EndCap => return self.lib.with(role, sites),
        };
        self.lib
            .with(role, sites)
            .into_iter()
            .filter(|&i| filter.admits(&self.lib.fragments[i].id))
            .collect()
    }

    /// Can fragment `i` occur in an admitted tuple as far as the role filters go (its role's
    /// include and exclude lists; end-caps always)?
    pub fn admits_fragment(&self, i: usize) -> bool {
        let f = &self.lib.fragments[i];
        match f.role {
            Role::Donor => self.params.donors.admits(&f.id),
            Role::Acceptor => self.params.acceptors.admits(&f.id),
            Role::Bridge => self.params.bridges.admits(&f.id),
            Role::EndCap => true,
        }
    }

    /// Constraint check for an orbit representative.
    fn judge(&self, t: Tuple) -> TupleEvent {
        if t.mol_weight(self.lib) > self.params.max_mol_weight {
            return TupleEvent::Rejected(Rejection::MolWeight);
        }
        if t.heavy_atoms(self.lib) > self.params.max_heavy_atoms {
            return TupleEvent::Rejected(Rejection::HeavyAtoms);
        }
        let frags = t.fragment_indices();
        if !self.forbidden.is_empty() {
            for (i, &a) in frags.iter().enumerate() {
                for &b in &frags[i + 1..] {
                    if self.forbidden.contains(&pair(a, b)) {
                        return TupleEvent::Rejected(Rejection::ForbiddenPair);
                    }
                }
            }
        }
        if !self.allowed.is_empty() {
            let role = |i: usize| self.lib.fragments[i].role;
            for &a in &frags {
                for &b in &frags {
                    if role(a) == Role::Donor
                        && role(b) == Role::Acceptor
                        && !self.allowed.contains(&pair(a, b))
                    {
                        return TupleEvent::Rejected(Rejection::PairNotAllowed);
                    }
                }
            }
        }
        TupleEvent::Admitted(t)
    }

    /// Is `arms` the smallest image of itself under the core's site permutations?
    fn is_representative(&self, core: usize, arms: &[Arm]) -> bool {
        let group = &self.lib.fragments[core].site_symmetry;
        let mut image = vec![Arm::H; arms.len()];
        for p in group {
            for (i, &a) in arms.iter().enumerate() {
                image[p[i] as usize] = a;
            }
            if image.as_slice() < arms {
                return false;
            }
        }
        true
    }

    /// Bridge orientations to use: both, or one when the bridge's sites are equivalent. The
    /// convention for a symmetric bridge is site 2 towards the core.
    fn orientations(&self, bridge: usize) -> &'static [u8] {
        if self.lib.fragments[bridge].sites_swappable() {
            &[1]
        } else {
            &[0, 1]
        }
    }

    /// Bridge arms in order: bridge, then orientation, then terminal fragment.
    fn bridged_arms(&self, bridges: &[usize], terminals: &[usize]) -> Vec<Arm> {
        let mut v = Vec::new();
        for &b in bridges {
            for &o in self.orientations(b) {
                for &t in terminals {
                    v.push(Arm::Bridged {
                        bridge: b,
                        core_site: o,
                        terminal: t,
                    });
                }
            }
        }
        v
    }

    /// Visit every raw assignment in order; `f` may stop the walk.
    pub fn for_each(&self, mut f: impl FnMut(TupleEvent) -> ControlFlow<()>) {
        for &arch in &self.params.architectures {
            if self.walk(arch, &mut f).is_break() {
                return;
            }
        }
    }

    fn emit(
        &self,
        arch: Architecture,
        core: usize,
        arms: &[Arm],
        f: &mut impl FnMut(TupleEvent) -> ControlFlow<()>,
    ) -> ControlFlow<()> {
        if !self.is_representative(core, arms) {
            return f(TupleEvent::SymmetryEquivalent);
        }
        f(self.judge(Tuple {
            architecture: arch,
            core,
            arms: Arms::from_slice(arms),
        }))
    }

    fn walk(
        &self,
        arch: Architecture,
        f: &mut impl FnMut(TupleEvent) -> ControlFlow<()>,
    ) -> ControlFlow<()> {
        let donors1 = self.pick(Role::Donor, 1);
        let acceptors1 = self.pick(Role::Acceptor, 1);
        let bridges = self.pick(Role::Bridge, 2);
        match arch {
            Architecture::DA => {
                for &a in &acceptors1 {
                    for &d in &donors1 {
                        self.emit(arch, a, &[Arm::Terminal(d)], f)?;
                    }
                }
            }
            Architecture::DBA => {
                let arms = self.bridged_arms(&bridges, &donors1);
                for &a in &acceptors1 {
                    for &arm in &arms {
                        self.emit(arch, a, &[arm], f)?;
                    }
                }
            }
            Architecture::DAD | Architecture::ADA => {
                let (cores, ends) = if arch == Architecture::DAD {
                    (self.pick(Role::Acceptor, 2), donors1)
                } else {
                    (self.pick(Role::Donor, 2), acceptors1)
                };
                for &c in &cores {
                    for &x in &ends {
                        for &y in &ends {
                            self.emit(arch, c, &[Arm::Terminal(x), Arm::Terminal(y)], f)?;
                        }
                    }
                }
            }
            Architecture::DBABD => {
                let arms = self.bridged_arms(&bridges, &donors1);
                for &a in &self.pick(Role::Acceptor, 2) {
                    for &arm in &arms {
                        self.emit(arch, a, &[arm, arm], f)?;
                    }
                }
            }
            Architecture::DnA => {
                for k in 2..=6 {
                    for &a in &self.pick(Role::Acceptor, k) {
                        for n in self.params.dn_a_min..=self.params.dn_a_max.min(k) {
                            self.walk_dna(a, k, n, &donors1, f)?;
                        }
                    }
                }
            }
        }
        ControlFlow::Continue(())
    }

    /// Dn–A on core `a` with `k` sites and exactly `n` donors; free sites are hydrogen.
    fn walk_dna(
        &self,
        a: usize,
        k: usize,
        n: usize,
        donors: &[usize],
        f: &mut impl FnMut(TupleEvent) -> ControlFlow<()>,
    ) -> ControlFlow<()> {
        let arch = Architecture::DnA;
        let mut arms = vec![Arm::H; k];
        match self.params.dn_a_mode {
            DnAMode::Alike => {
                for &d in donors {
                    // Subsets of n sites, as bit masks in increasing order.
                    for mask in 0u32..(1 << k) {
                        if mask.count_ones() as usize != n {
                            continue;
                        }
                        for (i, arm) in arms.iter_mut().enumerate() {
                            *arm = if mask >> i & 1 == 1 {
                                Arm::Terminal(d)
                            } else {
                                Arm::H
                            };
                        }
                        self.emit(arch, a, &arms, f)?;
                    }
                }
            }
            DnAMode::Mixed => {
                // Mixed radix over {H, donors...} per site, exactly n non-H.
                let m = donors.len() + 1;
                let mut digits = vec![0usize; k];
                loop {
                    if digits.iter().filter(|&&x| x > 0).count() == n {
                        for (arm, &d) in arms.iter_mut().zip(&digits) {
                            *arm = if d == 0 {
                                Arm::H
                            } else {
                                Arm::Terminal(donors[d - 1])
                            };
                        }
                        self.emit(arch, a, &arms, f)?;
                    }
                    // increment (last site fastest)
                    let mut i = k;
                    loop {
                        if i == 0 {
                            return ControlFlow::Continue(());
                        }
                        i -= 1;
                        digits[i] += 1;
                        if digits[i] < m {
                            break;
                        }
                        digits[i] = 0;
                    }
                }
            }
        }
        ControlFlow::Continue(())
    }
}
