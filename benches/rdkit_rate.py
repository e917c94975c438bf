#!/usr/bin/env python3
"""RDKit throughput baseline on the fixture's randomised SMILES.

NOT run by CI (needs RDKit: ``pip install rdkit``).

Per molecule: Chem.MolFromSmiles -> Chem.MolToSmiles (canonical) ->
rdMolDescriptors.CalcMolFormula -> Descriptors.MolWt.  Single thread, the whole
input list is processed once per repetition; the best of N repetitions is
reported as molecules/s and microseconds/molecule.

Usage:
  python3 benches/rdkit_rate.py [--fixture tests/fixtures/rdkit_molecules.jsonl]
                                [--reps 5] [--include-kekule]
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import time

from rdkit import Chem, RDLogger
from rdkit import __version__ as RDKIT_VERSION
from rdkit.Chem import Descriptors, rdMolDescriptors

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
DEFAULT_FIXTURE = os.path.join(ROOT, "tests", "fixtures", "rdkit_molecules.jsonl")


def load_smiles(path: str, include_kekule: bool) -> list[str]:
    out: list[str] = []
    with open(path, encoding="utf-8") as fh:
        for line in fh:
            if not line.strip():
                continue
            rec = json.loads(line)
            out.extend(rec["randomised"])
            if include_kekule:
                out.extend(rec.get("randomised_kekule", []))
    return out


def run_once(smiles: list[str]) -> tuple[float, int]:
    from_smiles = Chem.MolFromSmiles
    to_smiles = Chem.MolToSmiles
    formula = rdMolDescriptors.CalcMolFormula
    molwt = Descriptors.MolWt
    ok = 0
    t0 = time.perf_counter()
    for s in smiles:
        m = from_smiles(s)
        if m is None:
            continue
        to_smiles(m)
        formula(m)
        molwt(m)
        ok += 1
    return time.perf_counter() - t0, ok


def main() -> int:
    ap = argparse.ArgumentParser(description="RDKit parse+canonicalise+formula+MW rate")
    ap.add_argument("--fixture", default=DEFAULT_FIXTURE)
    ap.add_argument("--reps", type=int, default=5)
    ap.add_argument("--include-kekule", action="store_true",
                    help="also time the randomised_kekule SMILES")
    args = ap.parse_args()

    RDLogger.DisableLog("rdApp.*")
    smiles = load_smiles(args.fixture, args.include_kekule)
    run_once(smiles[:200])  # warm-up
    times = []
    for _ in range(args.reps):
        dt, ok = run_once(smiles)
        times.append(dt)
    best = min(times)
    n = len(smiles)
    print(f"rdkit {RDKIT_VERSION}, python {platform.python_version()}, single thread")
    print(f"input: {n} SMILES ({ok} parsed) from {os.path.relpath(args.fixture)}")
    print("per molecule: MolFromSmiles + MolToSmiles + CalcMolFormula + MolWt")
    print("reps (s): " + ", ".join(f"{t:.4f}" for t in times))
    print(f"best of {args.reps}: {n / best:,.0f} molecules/s, {best / n * 1e6:.1f} us/molecule")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
