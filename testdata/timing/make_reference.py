#!/usr/bin/python3
"""Reference values for caseweave/pipeline/timing, made with SciPy.

Run:  /usr/bin/python3 testdata/timing/make_reference.py > testdata/timing/reference.json

1. Serial intervals: interval-censored maximum likelihood (each integer interval d is
   censored to [max(d - 0.5, 0), d + 0.5]; negative d excluded) for gamma, lognormal and
   Weibull, built from scipy.stats CDFs/survival functions and maximised with
   scipy.optimize (Nelder-Mead, then BFGS, keeping the better), on log-parameters.
   Fixture intervals are drawn once here from numpy's seeded generator and stored, so the
   Go test reads the data and the answers from this file.
2. Negative-binomial exact intervals for a mean (inverting the NB CDF of the weekly total,
   Casella & Berger 2002, Thm 9.2.12) by brentq on scipy.stats.nbinom, and the Poisson
   (Garwood 1936) limit by scipy.stats.chi2.
3. The NB dispersion MLE k on a small count vector, by scipy.optimize.minimize_scalar.
"""
import json
import sys

import numpy as np
import scipy
from scipy import optimize, stats


def frozen(name, th):
    if name == "gamma":
        return stats.gamma(np.exp(th[0]), scale=1.0 / np.exp(th[1]))
    if name == "lognormal":
        return stats.lognorm(np.exp(th[1]), scale=np.exp(th[0]))
    if name == "weibull":
        return stats.weibull_min(np.exp(th[0]), scale=np.exp(th[1]))
    raise ValueError(name)


def params(name, th):
    if name == "gamma":
        return {"shape": float(np.exp(th[0])), "rate": float(np.exp(th[1]))}
    if name == "lognormal":
        return {"meanlog": float(th[0]), "sdlog": float(np.exp(th[1]))}
    return {"shape": float(np.exp(th[0])), "scale": float(np.exp(th[1]))}


def mass(dist, d):
    d = np.asarray(d, dtype=float)
    lo = np.maximum(d - 0.5, 0.0)
    hi = d + 0.5
    upper = dist.cdf(lo) > 0.5
    return np.where(upper, dist.sf(lo) - dist.sf(hi), dist.cdf(hi) - dist.cdf(lo))


def loglik(name, th, values, counts):
    m = mass(frozen(name, th), values)
    if np.any(~(m > 0)):
        return -1e300
    return float(np.sum(counts * np.log(m)))


def moment_start(name, x):
    m = max(x.mean(), 0.25)
    v = max(x.var(ddof=1) - 1.0 / 12, 0.01 * m * m, 1e-3)
    if name == "gamma":
        return [np.log(m * m / v), np.log(m / v)]
    if name == "lognormal":
        s2 = np.log1p(v / (m * m))
        return [np.log(m) - s2 / 2, 0.5 * np.log(s2)]
    from scipy.special import gammaln
    target = np.log(1 + v / (m * m))
    f = lambda lk: gammaln(1 + 2 / np.exp(lk)) - 2 * gammaln(1 + 1 / np.exp(lk)) - target
    lk = optimize.brentq(f, -4, 5)
    return [lk, np.log(m) - gammaln(1 + np.exp(-lk))]


def fit(name, x):
    values, counts = np.unique(x, return_counts=True)
    nll = lambda th: -loglik(name, th, values, counts)
    th0 = moment_start(name, x)
    r1 = optimize.minimize(nll, th0, method="Nelder-Mead",
                           options={"xatol": 1e-11, "fatol": 1e-13, "maxiter": 40000, "maxfev": 80000})
    r2 = optimize.minimize(nll, r1.x, method="BFGS", options={"gtol": 1e-9})
    best = r2 if r2.fun <= r1.fun else r1
    r3 = optimize.minimize(nll, best.x, method="Nelder-Mead",
                           options={"xatol": 1e-12, "fatol": 1e-14, "maxiter": 40000, "maxfev": 80000})
    if r3.fun < best.fun:
        best = r3
    th = best.x
    dist = frozen(name, th)
    ll = -float(best.fun)
    return {
        "name": name,
        "params": params(name, th),
        "loglik": ll,
        "aic": 4 - 2 * ll,
        "mean": float(dist.mean()),
        "sd": float(dist.std()),
        "quantiles": {"p50": float(dist.ppf(0.5)), "p95": float(dist.ppf(0.95)), "p99": float(dist.ppf(0.99))},
        "daily_mass_0_20": [float(v) for v in mass(dist, np.arange(21))],
        "cdf_at": {str(t): float(dist.cdf(t)) for t in (0.5, 1.0, 2.5, 5.0, 10.0, 30.0)},
    }


def fixtures():
    rng = np.random.default_rng(20240611)
    out = {}
    g = rng.gamma(4.0, 1.25, size=300)  # mean 5, sd 2.5
    x = np.floor(g + 0.5).astype(int).tolist() + [-1, -2, -1]
    out["gamma_300_with_negatives"] = x
    ln = rng.lognormal(1.5, 0.6, size=150)
    out["lognormal_150"] = np.floor(ln + 0.5).astype(int).tolist()
    w = 6.0 * rng.weibull(2.2, size=80)
    out["weibull_80"] = np.floor(w + 0.5).astype(int).tolist()
    out["small_with_zeros"] = [0, 0, 1, 1, 2, 2, 2, 3, 3, 4, 5, 7, -1]
    lt = rng.lognormal(1.2, 1.0, size=200)
    out["long_tail_200"] = np.floor(lt + 0.5).astype(int).tolist()
    return out


def nb_interval(n, s, k, alpha):
    """Exact interval for R when the weekly total S ~ NB(size n*k, mean n*R)."""
    size = n * k
    p = lambda R: k / (k + R)
    upper = optimize.brentq(lambda R: stats.nbinom.cdf(s, size, p(R)) - alpha / 2, 1e-12, 1e9,
                            xtol=1e-14, rtol=1e-13, maxiter=1000)
    if s == 0:
        lower = 0.0
    else:
        lower = optimize.brentq(lambda R: stats.nbinom.sf(s - 1, size, p(R)) - alpha / 2, 1e-14, 1e9,
                                xtol=1e-14, rtol=1e-13, maxiter=1000)
    return lower, upper


def poisson_interval(n, s, alpha):
    lower = 0.0 if s == 0 else stats.chi2.ppf(alpha / 2, 2 * s) / 2 / n
    upper = stats.chi2.ppf(1 - alpha / 2, 2 * s + 2) / 2 / n
    return lower, upper


def nb_k_mle(x):
    x = np.asarray(x, dtype=float)
    m = x.mean()
    nll = lambda lk: -np.sum(stats.nbinom.logpmf(x, np.exp(lk), np.exp(lk) / (np.exp(lk) + m)))
    r = optimize.minimize_scalar(nll, bounds=(-10, 10), method="bounded", options={"xatol": 1e-12})
    return float(np.exp(r.x))


def main():
    fx = fixtures()
    serial = {}
    for key, x in fx.items():
        arr = np.asarray([d for d in x if d >= 0])
        serial[key] = {
            "intervals": x,
            "models": [fit(name, arr) for name in ("gamma", "lognormal", "weibull")],
        }
    fixed = stats.gamma(6.25, scale=1 / 1.25)  # mean 5, sd 2
    fixed_gamma = {
        "mean": 5.0, "sd": 2.0, "shape": 6.25, "rate": 1.25,
        "quantiles": {"p50": float(fixed.ppf(0.5)), "p95": float(fixed.ppf(0.95)), "p99": float(fixed.ppf(0.99))},
        "daily_mass_0_20": [float(v) for v in mass(fixed, np.arange(21))],
    }
    alpha = 0.05
    nb_cases = []
    for (n, s, k) in [(1, 0, 0.5), (1, 3, 0.5), (3, 0, 0.5), (3, 2, 0.5), (5, 9, 0.3), (20, 30, 0.8),
                      (50, 40, 2.0), (200, 260, 0.4), (4, 1, 5.0)]:
        lo, hi = nb_interval(n, s, k, alpha)
        nb_cases.append({"n": n, "total": s, "k": k, "level": 1 - alpha, "lower": lo, "upper": hi})
    pois_cases = []
    for (n, s) in [(1, 0), (3, 2), (20, 30), (200, 260)]:
        lo, hi = poisson_interval(n, s, alpha)
        pois_cases.append({"n": n, "total": s, "level": 1 - alpha, "lower": float(lo), "upper": float(hi)})
    k_data = [0, 0, 0, 1, 0, 5, 2, 0, 0, 1, 0, 8, 0, 0, 3, 0, 1, 0, 0, 12, 0, 2, 0, 0, 1]
    out = {
        "generated_by": "testdata/timing/make_reference.py",
        "versions": {"python": sys.version.split()[0], "numpy": np.__version__, "scipy": scipy.__version__},
        "serial_interval": serial,
        "fixed_gamma": fixed_gamma,
        "nb_exact_interval": nb_cases,
        "poisson_exact_interval": pois_cases,
        "nb_k_mle": {"counts": k_data, "k": nb_k_mle(k_data)},
    }
    json.dump(out, sys.stdout, indent=1)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
