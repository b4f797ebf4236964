#!/usr/bin/python3
"""Reference values for pipeline/branching tests.

Run:  /usr/bin/python3 testdata/branching/make_reference.py > testdata/branching/reference.json
Tools: Python 3 (Debian /usr/bin/python3), SciPy 1.10.1, NumPy 1.24.2 (versions are
written into the JSON). Nothing here uses caseweave code.
"""
import json, math, sys
import numpy as np
import scipy
from scipy import special, stats, optimize

out = {"tool": {"python": sys.version.split()[0], "scipy": scipy.__version__, "numpy": np.__version__},
       "script": "testdata/branching/make_reference.py"}

# 1. Poisson extinction via Lambert W: q = -W0(-R e^{-R}) / R  [Corless et al. 1996]
out["poisson_extinction"] = [
    {"R": R, "q": float(-special.lambertw(-R * math.exp(-R), 0).real / R)}
    for R in [1.05, 1.1, 1.5, 2.0, 2.5, 3.0, 5.0, 10.0]]

# 2. Negative binomial extinction: smallest root of G(s) = s by scipy.optimize.brentq
def nb_pgf(s, R, k):
    return (1 + R / k * (1 - s)) ** (-k)
nbq = []
for R, k in [(2.5, 0.1), (2.5, 0.5), (1.5, 1.0), (3.0, 10.0), (1.2, 0.3)]:
    f = lambda s: nb_pgf(s, R, k) - s
    # bracket: f(0) > 0; scan for a negative value below 1
    hi = next(1 - 2.0 ** -j for j in range(1, 60) if f(1 - 2.0 ** -j) < 0)
    q = optimize.brentq(f, 0.0, hi, xtol=1e-16, rtol=8.9e-16, maxiter=500)
    nbq.append({"R": R, "k": k, "q": q})
out["negbin_extinction"] = nbq

# 3. Share of cases causing `target` of transmission by nu, NB(R, k):
#    t = gammaincinv(k + 1, 1 - target); share = gammaincc(k, t)  [Lloyd-Smith 2005; Endo 2020]
out["share_by_nu"] = [
    {"k": k, "target": tg, "share": float(special.gammaincc(k, special.gammaincinv(k + 1, 1 - tg)))}
    for k in [0.1, 0.16, 0.5, 1.0, 10.0] for tg in [0.8, 0.5, 0.9]]

# 4. Generation-size PMF of X_2 from a cases by conditioning on X_1 (independent of PGFs/FFT):
#    Poisson: X_1 ~ Poisson(aR), X_2 | X_1 = m ~ Poisson(mR).
#    NB: X_1 ~ NB(ak, p), X_2 | X_1 = m ~ NB(mk, p), p = k/(k+R) (scipy's nbinom(n, p)).
def gen2_poisson(R, a, J, mmax):
    m = np.arange(mmax)
    w = stats.poisson.pmf(m, a * R)
    j = np.arange(J)
    p = np.zeros(J)
    for mi, wi in zip(m, w):
        p += wi * (stats.poisson.pmf(j, mi * R) if mi > 0 else (j == 0).astype(float))
    return p
def gen2_nb(R, k, a, J, mmax):
    pp = k / (k + R)
    m = np.arange(mmax)
    w = stats.nbinom.pmf(m, a * k, pp)
    j = np.arange(J)
    p = np.zeros(J)
    for mi, wi in zip(m, w):
        p += wi * (stats.nbinom.pmf(j, mi * k, pp) if mi > 0 else (j == 0).astype(float))
    return p
out["generation2"] = [
    {"model": "poisson", "R": 1.5, "k": None, "a": 2, "pmf": gen2_poisson(1.5, 2, 60, 80).tolist()},
    {"model": "negative_binomial", "R": 1.2, "k": 0.5, "a": 3, "pmf": gen2_nb(1.2, 0.5, 3, 60, 400).tolist()},
]

# 5. Chain sizes for a list PMF by exact polynomial powers (no FFT):
#    P(Y = y) = (1/y) [s^{y-1}] G(s)^y  [Blumberg & Lloyd-Smith 2013; Dwass 1969]
plist = [0.3, 0.25, 0.2, 0.15, 0.1]   # mean 1.5
plist2 = [0.5, 0.3, 0.15, 0.05]       # mean 0.75
def lagrange_poly(p, Y):
    res = []
    for y in range(1, Y + 1):
        c = np.polynomial.polynomial.polypow(np.array(p), y)
        res.append(float(c[y - 1] / y) if y - 1 < len(c) else 0.0)
    return res
out["chain_list"] = [{"p": plist, "pmf": lagrange_poly(plist, 40)},
                     {"p": plist2, "pmf": lagrange_poly(plist2, 40)}]

# 6. Chain-size closed forms with scipy.special.gammaln
def nb_chain(R, k, y):
    return math.exp(special.gammaln(k * y + y - 1) - special.gammaln(k * y) - special.gammaln(y + 1)
                    + (y - 1) * math.log(R / k) - (k * y + y - 1) * math.log1p(R / k))
def borel(R, y):
    return math.exp(-R * y + (y - 1) * math.log(R * y) - special.gammaln(y + 1))
out["chain_negbin"] = [{"R": R, "k": k, "y": y, "p": nb_chain(R, k, y)}
                       for R, k in [(0.8, 0.2), (2.5, 0.1), (0.5, 5.0)] for y in [1, 2, 3, 10, 50, 200]]
out["chain_borel"] = [{"R": R, "y": y, "p": borel(R, y)} for R in [0.5, 0.9, 1.5] for y in [1, 2, 5, 20, 100]]

# 7. Lambert W values for checking the test's own Halley iteration
out["lambertw"] = [{"z": z, "w": float(special.lambertw(z, 0).real)} for z in [-0.3, -0.1, 0.5, 1.0, 3.0]]

json.dump(out, sys.stdout, indent=1)
