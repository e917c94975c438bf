#!/usr/bin/env python3
"""Time the PySCF route on lumisift's own PPP models (same h and gamma, same electron count):
RHF with custom integrals, then TDA singlets and triplets, 6 roots each. Compared with the
criterion bench `pi/scf+cis` (same molecules, same 60 degree twist). Not run by CI.

    cargo run --release --example export_ppp_model > /tmp/ppp_models.json
    OMP_NUM_THREADS=1 python3 benches/pyscf_model_route.py /tmp/ppp_models.json
"""
import json
import os
import sys
import time

for _v in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_v, "1")

import numpy as np  # noqa: E402
from pyscf import ao2mo, gto, scf, tdscf  # noqa: E402


def run(model):
    h = np.array(model["h"])
    g = np.array(model["gamma"])
    n = h.shape[0]
    eri = np.zeros((n, n, n, n))
    for i in range(n):
        for j in range(n):
            eri[i, i, j, j] = g[i, j]
    mol = gto.M(verbose=0)
    mol.nelectron = int(model["n_electrons"])
    mol.incore_anyway = True
    mf = scf.RHF(mol)
    mf.get_hcore = lambda *a: h
    mf.get_ovlp = lambda *a: np.eye(n)
    mf._eri = ao2mo.restore(8, eri, n)
    mf.conv_tol = 1e-9
    mf.verbose = 0
    mf.kernel()
    out = []
    for singlet in (True, False):
        td = tdscf.TDA(mf)
        td.singlet = singlet
        td.nstates = 6
        td.verbose = 0
        td.kernel()
        out.append(td.e[0])
    return out


def main():
    models = json.load(open(sys.argv[1]))
    for m in models:
        run(m)  # warm-up
        reps = 5
        t0 = time.perf_counter()
        for _ in range(reps):
            e = run(m)
        dt = (time.perf_counter() - t0) / reps
        print(f"{m['name']} ({m['n_sites']} sites): PySCF RHF + TDA(S, T; 6 roots) "
              f"{dt * 1e3:.1f} ms per solve; S1 {e[0]:.4f} eV, T1 {e[1]:.4f} eV (raw, no corrections)")


if __name__ == "__main__":
    main()
