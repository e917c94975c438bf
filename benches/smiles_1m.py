#!/usr/bin/env python3
"""Write a large "SMILES<TAB>id" file for memory tests of a streaming reader.

NOT run by CI.  Needs only the Python standard library (no RDKit): it cycles
through the randomised SMILES of tests/fixtures/rdkit_molecules.jsonl.  Line k
(0-based) holds the k-th SMILES of the cycle and the id "<molecule id>_<k>", so
ids are unique.  Output is deterministic.

Usage:
  python3 benches/smiles_1m.py OUT_PATH [-n 1000000] [--fixture PATH]
"""

from __future__ import annotations

import argparse
import json
import os

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
DEFAULT_FIXTURE = os.path.join(ROOT, "tests", "fixtures", "rdkit_molecules.jsonl")


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("out", help="output path")
    ap.add_argument("-n", "--lines", type=int, default=1_000_000)
    ap.add_argument("--fixture", default=DEFAULT_FIXTURE)
    args = ap.parse_args()

    pool: list[tuple[str, str]] = []
    with open(args.fixture, encoding="utf-8") as fh:
        for line in fh:
            if line.strip():
                rec = json.loads(line)
                pool.extend((s, rec["id"]) for s in rec["randomised"])
    if not pool:
        raise SystemExit("fixture has no SMILES")

    written = 0
    with open(args.out, "w", encoding="ascii", newline="\n", buffering=1 << 20) as out:
        for k in range(args.lines):
            smi, mid = pool[k % len(pool)]
            written += out.write(f"{smi}\t{mid}_{k}\n")
    print(f"wrote {args.lines} lines ({written / 1e6:.1f} MB) to {args.out}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
