#!/usr/bin/env python3
"""RDKit baseline for the fragment combiner: products built per second.

NOT run by CI (needs RDKit: ``pip install rdkit``; ``tomllib`` needs Python >= 3.11).

Enumerates the D-A, D-B-A and D-A-D architectures of a fragment library with the combiner's
joining rules (see tests/fixtures/combine/make_products.py) and times RDKit building each
product: copy the fragment templates, label the paired dummies with a shared atom-map number,
Chem.CombineMols, Chem.molzip, clear atom maps, Chem.SanitizeMol, Chem.MolToSmiles (canonical).
Fragment SMILES are parsed and the tuple list is made before the clock starts.  Single thread;
each architecture is run --reps times and the best time is reported as products/s (every
tuple counts, duplicates included; the distinct count is printed beside it).

  D-A   : each 1-site donor x each 1-site acceptor
  D-B-A : each 1-site donor x each bridge x each 1-site acceptor, both bridge orientations
  D-A-D : each 2-site acceptor x each ordered pair of 1-site donors (d1 on site 1, d2 on site 2)

Library: the shipped library ``fragments/*.toml`` if it is there and complete enough (every
file parses, and it has 1-site donors, 1-site acceptors, bridges and 2-site acceptors);
otherwise the small test library tests/fixtures/combine/small_library.toml.  The reason for a
fallback is printed.

Usage:
  python3 benches/rdkit_enumerate.py [--library PATH(.toml file or directory)] [--reps 3]
                                     [--limit 50000] [--no-sanitize]
"""

from __future__ import annotations

import argparse
import glob
import os
import platform
import sys
import time
import tomllib

from rdkit import Chem, RDLogger
from rdkit import __version__ as RDKIT_VERSION

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
SHIPPED = os.path.join(ROOT, "fragments")
SMALL = os.path.join(ROOT, "tests", "fixtures", "combine", "small_library.toml")
REQUIRED_KEYS = ("id", "name", "role", "smiles", "handle")


class Fragment:
    __slots__ = ("id", "role", "mol", "sites")

    def __init__(self, fid: str, role: str, mol: Chem.Mol, sites: list[int]):
        self.id, self.role, self.mol, self.sites = fid, role, mol, sites


def parse_fragment(entry: dict) -> Fragment | None:
    """None if RDKit cannot read the SMILES or the sites are not [*:1]..[*:k]."""
    mol = Chem.MolFromSmiles(entry["smiles"])
    if mol is None:
        return None
    by_class = {}
    for atom in mol.GetAtoms():
        if atom.GetAtomicNum() == 0:
            if atom.GetDegree() != 1 or atom.GetAtomMapNum() in by_class:
                return None
            by_class[atom.GetAtomMapNum()] = atom.GetIdx()
    k = len(by_class)
    if sorted(by_class) != list(range(1, k + 1)):
        return None
    return Fragment(entry["id"], entry["role"], mol, [by_class[c] for c in range(1, k + 1)])


def load(paths: list[str]) -> tuple[list[Fragment], list[str]]:
    """Fragments of all files (in id order) and a list of problems (empty = complete)."""
    problems: list[str] = []
    frags: dict[str, Fragment] = {}
    for path in paths:
        try:
            with open(path, "rb") as fh:
                data = tomllib.load(fh)
        except (OSError, tomllib.TOMLDecodeError) as exc:
            problems.append(f"{os.path.relpath(path, ROOT)}: {exc}")
            continue
        for i, entry in enumerate(data.get("fragment", [])):
            if not all(k in entry for k in REQUIRED_KEYS):
                problems.append(f"{os.path.relpath(path, ROOT)} entry {i + 1}: missing keys")
                continue
            frag = parse_fragment(entry)
            if frag is None:
                print(f"  skipped {entry['id']}: RDKit cannot use {entry['smiles']!r}",
                      file=sys.stderr)
                continue
            if frag.id in frags:
                print(f"  duplicate id {frag.id} (later entry ignored)", file=sys.stderr)
                continue
            frags[frag.id] = frag
    lib = [frags[k] for k in sorted(frags)]
    for what, role, k in (("1-site donors", "donor", 1), ("1-site acceptors", "acceptor", 1),
                          ("bridges", "bridge", 2), ("2-site acceptors", "acceptor", 2)):
        if not any(f.role == role and len(f.sites) == k for f in lib):
            problems.append(f"no {what}")
    return lib, problems


def choose_library(arg: str | None) -> tuple[list[Fragment], str]:
    if arg:
        paths = sorted(glob.glob(os.path.join(arg, "*.toml"))) if os.path.isdir(arg) else [arg]
        lib, problems = load(paths)
        if problems:
            sys.exit(f"library {arg} unusable: " + "; ".join(problems))
        return lib, arg
    paths = sorted(glob.glob(os.path.join(SHIPPED, "*.toml")))
    if paths:
        lib, problems = load(paths)
        if not problems:
            return lib, f"fragments/*.toml ({len(paths)} files)"
        reason = "; ".join(problems)
    else:
        reason = "fragments/*.toml absent"
    print(f"shipped library not used ({reason}); falling back to the small library")
    lib, problems = load([SMALL])
    if problems:
        sys.exit("small library unusable: " + "; ".join(problems))
    return lib, os.path.relpath(SMALL, ROOT)


def tuples(lib: list[Fragment], limit: int) -> dict[str, list]:
    """architecture -> list of parts; parts = [(fragment, {site index: join label})]."""
    donors = [f for f in lib if f.role == "donor" and len(f.sites) == 1]
    acc1 = [f for f in lib if f.role == "acceptor" and len(f.sites) == 1]
    acc2 = [f for f in lib if f.role == "acceptor" and len(f.sites) == 2]
    bridges = [f for f in lib if f.role == "bridge" and len(f.sites) == 2]

    def da():
        for d in donors:
            for a in acc1:
                yield [(d, {0: 1}), (a, {0: 1})]

    def dba():
        for d in donors:
            for b in bridges:
                for a in acc1:
                    yield [(d, {0: 1}), (b, {0: 1, 1: 2}), (a, {0: 2})]
                    yield [(d, {0: 1}), (b, {1: 1, 0: 2}), (a, {0: 2})]

    def dad():
        for a in acc2:
            for d1 in donors:
                for d2 in donors:
                    yield [(a, {0: 1, 1: 2}), (d1, {0: 1}), (d2, {0: 2})]

    totals = {
        "D-A": len(donors) * len(acc1),
        "D-B-A": 2 * len(donors) * len(bridges) * len(acc1),
        "D-A-D": len(acc2) * len(donors) ** 2,
    }
    print(f"1-site donors {len(donors)}, 1-site acceptors {len(acc1)}, bridges {len(bridges)}, "
          f"2-site acceptors {len(acc2)}")
    out = {}
    for name, gen in (("D-A", da), ("D-B-A", dba), ("D-A-D", dad)):
        out[name] = []
        for parts in gen():
            if len(out[name]) >= limit:
                print(f"  {name}: {totals[name]} tuples, timing the first {limit} (--limit)")
                break
            out[name].append(parts)
    return out


def run(all_parts: list, sanitize: bool) -> tuple[float, set[str]]:
    combine, molzip, to_smiles, sanitize_mol = (Chem.CombineMols, Chem.molzip, Chem.MolToSmiles,
                                                Chem.SanitizeMol)
    seen: set[str] = set()
    t0 = time.perf_counter()
    for parts in all_parts:
        combined = None
        for frag, labels in parts:
            rw = Chem.RWMol(frag.mol)
            for s, lab in labels.items():
                rw.GetAtomWithIdx(frag.sites[s]).SetAtomMapNum(lab)
            combined = rw if combined is None else combine(combined, rw)
        prod = molzip(combined)
        for atom in prod.GetAtoms():
            atom.SetAtomMapNum(0)
        if sanitize:
            sanitize_mol(prod)
        seen.add(to_smiles(prod))
    return time.perf_counter() - t0, seen


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--library", help=".toml file or directory of .toml files")
    ap.add_argument("--reps", type=int, default=3)
    ap.add_argument("--limit", type=int, default=50_000,
                    help="time at most this many tuples per architecture (default 50000)")
    ap.add_argument("--no-sanitize", action="store_true",
                    help="skip Chem.SanitizeMol after molzip (fragments are already perceived)")
    args = ap.parse_args()
    RDLogger.DisableLog("rdApp.*")

    print(f"RDKit {RDKIT_VERSION}, Python {platform.python_version()}, {platform.machine()}")
    lib, source = choose_library(args.library)
    print(f"library: {source}, {len(lib)} fragments")
    work = tuples(lib, args.limit)
    sanitize = not args.no_sanitize
    print(f"per product: RWMol copies + map labels + CombineMols + molzip"
          f"{' + SanitizeMol' if sanitize else ''} + MolToSmiles; one thread, best of {args.reps}")

    total_n, total_t = 0, 0.0
    for name, parts in work.items():
        if not parts:
            print(f"{name:6s} no tuples")
            continue
        best, distinct = float("inf"), set()
        for _ in range(args.reps):
            t, distinct = run(parts, sanitize)
            best = min(best, t)
        total_n += len(parts)
        total_t += best
        print(f"{name:6s} {len(parts):7d} products ({len(distinct)} distinct) "
              f"{best * 1e3:9.1f} ms  {len(parts) / best:9,.0f} products/s "
              f"({best / len(parts) * 1e6:.0f} us each)")
    if total_n:
        print(f"{'all':6s} {total_n:7d} products {'':15s}{total_t * 1e3:9.1f} ms  "
              f"{total_n / total_t:9,.0f} products/s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
