"""Reference values for pipeline/branching/control_test.go (targeted and random control,
Lloyd-Smith et al. 2005, Nature 438:355), computed independently of caseweave's closed
forms: every truncated gamma expectation is a numerical integral over the probability
scale, E[g(nu); nu <= nu_c] = integral_0^{1-c} g(F^{-1}(p)) dp, with F^{-1} SciPy's gamma
quantile function, and every extinction probability the smallest root of G(s) = s found by
brentq. Run with Debian's python3-scipy: python3 control_reference.py > control_reference.json
"""
import json
import math
import sys

import numpy
import scipy
from scipy import integrate, optimize, stats


def truncated(g, R, k, c):
    """E[g(nu); nu below the (1 - c) quantile] for nu ~ Gamma(shape k, mean R)."""
    if c >= 1:
        return 0.0
    ppf = lambda p: stats.gamma.ppf(p, a=k, scale=R / k)
    # The integrand is smooth in p except near p = 0 for small k; split there.
    pts = [x for x in (1e-8, 1e-4, 1e-2) if x < 1 - c]
    val, _ = integrate.quad(lambda p: g(ppf(p)), 0, 1 - c, points=pts or None,
                            limit=500, epsabs=1e-14, epsrel=1e-12)
    return val


def smallest_root(G, Rc):
    if Rc <= 1:
        return 1.0
    h = lambda s: G(s) - s
    u = 0.5
    while h(1 - u) >= 0:
        u /= 2
    return optimize.brentq(h, 0, 1 - u, xtol=1e-15, rtol=1e-15, maxiter=500)


def negbin_pgf(R, k):
    return lambda s: (1 + R * (1 - s) / k) ** (-k)


def scenario(R, k, c):
    out = {"R": R, "k": k, "c": c}
    # targeted: the share c of cases with the largest nu cause nothing
    Rt = truncated(lambda v: v, R, k, c)
    Gt = lambda s: c + truncated(lambda v: math.exp(-v * (1 - s)), R, k, c)
    out["targeted_R"] = Rt
    out["targeted_q"] = smallest_root(Gt, Rt)
    # population-wide: nu scaled by 1 - c, so NB(R(1 - c), k)
    out["population_R"] = R * (1 - c)
    out["population_q"] = smallest_root(negbin_pgf(R * (1 - c), k), R * (1 - c)) if c < 1 else 1.0
    # individual-specific: a random share c removed
    G = negbin_pgf(R, k)
    out["individual_R"] = R * (1 - c)
    out["individual_q"] = smallest_root(lambda s: c + (1 - c) * G(s), R * (1 - c))
    return out


def threshold(R, k):
    """Smallest targeted effort with R_c = 1."""
    return optimize.brentq(lambda c: truncated(lambda v: v, R, k, c) - 1, 0, 1 - 1e-12,
                           xtol=1e-13, maxiter=500)


doc = {
    "tool": {"python": sys.version.split()[0], "scipy": scipy.__version__, "numpy": numpy.__version__},
    "scenarios": [scenario(R, k, c)
                  for R, k in [(3.0, 0.1), (3.0, 0.5), (2.0, 1.0), (1.5, 0.3), (2.5, 5.0)]
                  for c in [0.0, 0.05, 0.1, 0.25, 0.5, 0.75]],
    "thresholds": [{"R": R, "k": k, "targeted": threshold(R, k), "random": 1 - 1 / R}
                   for R, k in [(3.0, 0.1), (3.0, 0.5), (3.0, 1.0), (3.0, 4.0), (1.5, 0.3), (6.0, 0.16)]],
}
json.dump(doc, sys.stdout, indent=1)
print()
