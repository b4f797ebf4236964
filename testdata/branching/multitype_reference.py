"""Reference values for pipeline/branching/multitype_test.go: the spectral radius of a
next-generation matrix by numpy.linalg.eigvals, the left Perron vector by numpy.linalg.eig of
the transpose, and the extinction probabilities of a multitype process with negative-binomial
totals split multinomially, G_i(s) = (1 + sum_j M_ij (1 - s_j)/k_i)^(-k_i) (Poisson where k_i is
infinite), as the limit of s <- G(s) from s = 0 (Harris 1963, ch. II, Thm 7.1), run until it
stops changing (at most 2,000,000 steps), then checked with scipy.optimize.fsolve from that
point. Run with Debian's python3-scipy:
python3 multitype_reference.py > multitype_reference.json
"""
import json
import math
import sys

import numpy as np
import scipy
from scipy import optimize


def pgf(M, k):
    R = M.sum(axis=1)

    def G(s):
        z = M @ (1 - s)
        out = np.empty_like(s)
        for i in range(len(s)):
            if math.isinf(k[i]):
                out[i] = math.exp(-z[i])
            else:
                out[i] = (1 + z[i] / k[i]) ** (-k[i])
        return out
    return G


def extinction(M, k):
    G = pgf(M, k)
    s = np.zeros(len(k))
    for it in range(2_000_000):
        t = G(s)
        if np.array_equal(t, s):
            break
        s = t
    polished = optimize.fsolve(lambda x: G(x) - x, s, xtol=1e-15)
    return s, polished, it


cases = [
    ("mixed", [[0.9, 0.5, 0.3, 0.1], [0.4, 1.2, 0.5, 0.2], [0.2, 0.6, 0.8, 0.3], [0.1, 0.3, 0.4, 0.5]],
     [0.3, 0.8, 0.5, 2.0]),
    ("poisson_row_and_empty_row", [[0.2, 1.5, 0.0, 0.7], [0.6, 0.9, 0.4, 0.0], [0.0, 0.0, 0.0, 0.0], [1.1, 0.3, 0.8, 0.6]],
     [0.2, math.inf, 1.0, 0.5]),
    ("near_critical", None, [0.4, 0.6, 1.5, 0.9]),
    ("subcritical", [[0.3, 0.2, 0.1, 0.0], [0.2, 0.3, 0.1, 0.1], [0.1, 0.1, 0.4, 0.1], [0.0, 0.2, 0.2, 0.3]],
     [0.5, 0.5, 0.5, 0.5]),
]
base = np.array(cases[0][1])
rho0 = max(abs(np.linalg.eigvals(base)))
cases[2] = ("near_critical", (base * 1.05 / rho0).tolist(), cases[2][2])

out = {"tool": {"python": sys.version.split()[0], "scipy": scipy.__version__, "numpy": np.__version__}, "cases": []}
for name, M, k in cases:
    M = np.array(M, dtype=float)
    ev = np.linalg.eigvals(M)
    rho = float(max(abs(ev)))
    w, V = np.linalg.eig(M.T)
    i = int(np.argmax(w.real))
    v = np.abs(V[:, i].real)
    v = v / v.sum()
    s, pol, it = extinction(M, k)
    out["cases"].append({
        "name": name, "M": M.tolist(), "k": [x if not math.isinf(x) else None for x in k],
        "spectral_radius": rho, "stable_shares": v.tolist(),
        "extinction": s.tolist(), "extinction_fsolve": pol.tolist(), "iterations": it,
    })
json.dump(out, sys.stdout, indent=1)
print()
