//! Reading and validating fragment library files.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::Deserialize;
use thiserror::Error;

use super::{Fragment, Handle, Library, Site, SourceRef};
use crate::chem::{AtomIdx, BondOrder, Molecule, canonical_smiles, parse_smiles, props};
use crate::model::Role;

/// A problem with one file or one entry, located by file and line.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
#[error("{}:{}: {}{}", .file.display(), .line, .id.as_ref().map(|i| format!("fragment '{i}': ")).unwrap_or_default(), .message)]
pub struct FragmentError {
    pub file: PathBuf,
    /// 1-based line (0 when the whole file is concerned).
    pub line: usize,
    pub id: Option<String>,
    pub message: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFile {
    #[serde(default)]
    fragment: Vec<toml::Spanned<RawFragment>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFragment {
    id: String,
    name: String,
    role: Role,
    smiles: String,
    handle: Handle,
    #[serde(default)]
    on_shelf: bool,
    #[serde(default)]
    note: Option<String>,
}

fn line_of(text: &str, byte: usize) -> usize {
    text[..byte.min(text.len())].matches('\n').count() + 1
}

/// Files a path stands for: the path itself, or the `*.toml` files of a folder (sorted by name,
/// not recursive).
fn expand(path: &Path) -> Result<Vec<PathBuf>, FragmentError> {
    let err = |m: String| FragmentError {
        file: path.to_path_buf(),
        line: 0,
        id: None,
        message: m,
    };
    let meta = std::fs::metadata(path).map_err(|e| err(format!("cannot read: {e}")))?;
    if meta.is_dir() {
        let mut files: Vec<PathBuf> = std::fs::read_dir(path)
            .map_err(|e| err(format!("cannot list folder: {e}")))?
            .filter_map(|e| e.ok().map(|e| e.path()))
            .filter(|p| p.extension().is_some_and(|x| x == "toml"))
            .collect();
        files.sort();
        if files.is_empty() {
            return Err(err("no *.toml fragment files in this folder".into()));
        }
        Ok(files)
    } else {
        Ok(vec![path.to_path_buf()])
    }
}

/// Load and validate every fragment file under `paths` (files, or folders of `*.toml`).
/// All problems are collected; the library is returned only when there are none.
pub fn load_paths(paths: &[PathBuf]) -> Result<Library, Vec<FragmentError>> {
    let mut errors = Vec::new();
    let mut fragments = Vec::new();
    for p in paths {
        match expand(p) {
            Ok(files) => {
                for f in files {
                    match std::fs::read_to_string(&f) {
                        Ok(text) => match load_library(&f, &text) {
                            Ok(mut frs) => fragments.append(&mut frs),
                            Err(mut es) => errors.append(&mut es),
                        },
                        Err(e) => errors.push(FragmentError {
                            file: f.clone(),
                            line: 0,
                            id: None,
                            message: format!("cannot read: {e}"),
                        }),
                    }
                }
            }
            Err(e) => errors.push(e),
        }
    }
    // Duplicates across files.
    let mut by_id: BTreeMap<&str, &Fragment> = BTreeMap::new();
    let mut by_structure: BTreeMap<String, &Fragment> = BTreeMap::new();
    for f in &fragments {
        if let Some(prev) = by_id.insert(&f.id, f) {
            errors.push(FragmentError {
                file: f.source.file.clone(),
                line: f.source.line,
                id: Some(f.id.clone()),
                message: format!(
                    "duplicate id (first defined at {}:{})",
                    prev.source.file.display(),
                    prev.source.line
                ),
            });
        }
        let key = structure_key(f);
        if let Some(prev) = by_structure.insert(key, f) {
            errors.push(FragmentError {
                file: f.source.file.clone(),
                line: f.source.line,
                id: Some(f.id.clone()),
                message: format!(
                    "same structure as fragment '{}' ({}:{})",
                    prev.id,
                    prev.source.file.display(),
                    prev.source.line
                ),
            });
        }
    }
    if !errors.is_empty() {
        errors.sort_by(|a, b| (&a.file, a.line).cmp(&(&b.file, b.line)));
        return Err(errors);
    }
    fragments.sort_by(|a, b| a.id.cmp(&b.id));
    Ok(Library { fragments })
}

/// Canonical SMILES with every attachment class set to 1: equal for two entries of one
/// structure whatever their site numbering.
fn structure_key(f: &Fragment) -> String {
    let mut m = f.mol.clone();
    for s in &f.sites {
        m.atom_mut(s.dummy).class = 1;
    }
    canonical_smiles(&m)
}

/// Parse and validate the fragments of one file's text. `file` is used in messages only.
pub fn load_library(file: &Path, text: &str) -> Result<Vec<Fragment>, Vec<FragmentError>> {
    let raw: RawFile = toml::from_str(text).map_err(|e| {
        let line = e.span().map(|s| line_of(text, s.start)).unwrap_or(0);
        vec![FragmentError {
            file: file.to_path_buf(),
            line,
            id: None,
            message: e.message().trim().to_string(),
        }]
    })?;
    let mut out = Vec::new();
    let mut errors = Vec::new();
    for entry in raw.fragment {
        let line = line_of(text, entry.span().start);
        let r = entry.into_inner();
        match build(file, line, r) {
            Ok(f) => out.push(f),
            Err(e) => errors.push(e),
        }
    }
    if errors.is_empty() {
        Ok(out)
    } else {
        Err(errors)
    }
}

fn build(file: &Path, line: usize, r: RawFragment) -> Result<Fragment, FragmentError> {
    let err = |m: String| FragmentError {
        file: file.to_path_buf(),
        line,
        id: Some(r.id.clone()),
        message: m,
    };
    if r.id.is_empty()
        || !r
            .id
            .chars()
            .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || "-,()[]'".contains(c))
    {
        return Err(err(
            "id must be non-empty and use only a-z, 0-9 and - , ( ) [ ] '".into(),
        ));
    }
    let mol = parse_smiles(&r.smiles).map_err(|e| err(format!("SMILES '{}': {e}", r.smiles)))?;
    if mol.component_count() != 1 {
        return Err(err("SMILES must be one connected structure (no '.')".into()));
    }
    let mut sites: Vec<Site> = Vec::new();
    for a in mol.atoms() {
        let atom = mol.atom(a);
        if !atom.is_dummy() {
            continue;
        }
        if atom.class == 0 {
            return Err(err(
                "attachment points must be numbered: write [*:1], [*:2], ...".into(),
            ));
        }
        let nbrs: Vec<_> = mol.neighbours(a).collect();
        if nbrs.len() != 1 {
            return Err(err(format!(
                "attachment point [*:{}] must have exactly one neighbour, has {}",
                atom.class,
                nbrs.len()
            )));
        }
        let (anchor, bond) = nbrs[0];
        if mol.bond(bond).order != BondOrder::Single || mol.bond(bond).aromatic {
            return Err(err(format!(
                "attachment point [*:{}] must be joined by a single bond",
                atom.class
            )));
        }
        if mol.atom(anchor).is_dummy() {
            return Err(err("two attachment points are bonded to each other".into()));
        }
        if atom.charge != 0 || atom.hydrogens != 0 || atom.isotope != 0 {
            return Err(err(format!(
                "attachment point [*:{}] must carry no charge, isotope or hydrogens",
                atom.class
            )));
        }
        sites.push(Site {
            class: atom.class,
            dummy: a,
            anchor,
        });
    }
    sites.sort_by_key(|s| s.class);
    for (i, s) in sites.iter().enumerate() {
        if s.class as usize != i + 1 {
            return Err(err(format!(
                "attachment points must be numbered 1..{} without gaps or repeats; found [*:{}]",
                sites.len(),
                s.class
            )));
        }
    }
    let (lo, hi) = match r.role {
        Role::Donor => (1, 2),
        Role::Acceptor => (1, 6),
        Role::Bridge => (2, 2),
        Role::EndCap => (1, 1),
    };
    if sites.len() < lo || sites.len() > hi {
        return Err(err(format!(
            "a {} needs {} attachment point{}, found {}",
            r.role,
            if lo == hi {
                lo.to_string()
            } else {
                format!("{lo} to {hi}")
            },
            if hi == 1 { "" } else { "s" },
            sites.len()
        )));
    }
    let mass_without_sites = props::average_mass(&mol).map_err(|e| err(e.to_string()))?;
    let heavy_atoms = props::heavy_atom_count(&mol);
    let canonical = canonical_smiles(&mol);
    let site_symmetry = site_symmetry(&mol, &sites, &canonical);
    Ok(Fragment {
        id: r.id,
        name: r.name,
        role: r.role,
        smiles: r.smiles,
        handle: r.handle,
        on_shelf: r.on_shelf,
        note: r.note,
        mol,
        sites,
        site_symmetry,
        canonical_smiles: canonical,
        mass_without_sites,
        heavy_atoms,
        source: SourceRef {
            file: file.to_path_buf(),
            line,
        },
    })
}

/// The permutations of site labels that leave the labelled fragment unchanged: relabel the
/// dummies and compare canonical SMILES (atom classes are part of the canonical invariant), so
/// the test is exact. At most 6! = 720 canonicalisations, once per fragment.
fn site_symmetry(mol: &Molecule, sites: &[Site], canonical: &str) -> Vec<Vec<u8>> {
    let k = sites.len();
    let mut perms = Vec::new();
    let mut p: Vec<u8> = (0..k as u8).collect();
    permutations(&mut p, 0, &mut |perm| {
        let mut m = mol.clone();
        for (i, s) in sites.iter().enumerate() {
            m.atom_mut(s.dummy).class = perm[i] as u32 + 1;
        }
        if canonical_smiles(&m) == canonical {
            perms.push(perm.to_vec());
        }
    });
    perms.sort();
    perms
}

fn permutations(p: &mut [u8], start: usize, f: &mut impl FnMut(&[u8])) {
    if start == p.len() {
        f(p);
        return;
    }
    for i in start..p.len() {
        p.swap(start, i);
        permutations(p, start + 1, f);
        p.swap(start, i);
    }
}

/// Indices of the sites, for callers that want `AtomIdx` lists.
pub fn site_anchors(f: &Fragment) -> Vec<AtomIdx> {
    f.sites.iter().map(|s| s.anchor).collect()
}
