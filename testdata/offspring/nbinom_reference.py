"""Negative-binomial PMF and log-PMF from SciPy, for pipeline/offspring (nbinom_test.go).

Run from the repository root with Debian's Python and SciPy (CI does not need them):

    /usr/bin/python3 testdata/offspring/nbinom_reference.py > testdata/offspring/nbinom_reference.csv

caseweave writes the negative binomial by mean R and dispersion k; scipy.stats.nbinom by
n = k and p = k/(k + R). The p passed to SciPy is a rounded double, so each row also gives
R_eff = k(1 - p)/p evaluated exactly (fractions.Fraction) on that double and then rounded:
the mean SciPy actually evaluated, which the Go test uses. Columns: R (the grid value),
R_eff, k, x, pmf (scipy.stats.nbinom.pmf, Boost's negative_binomial pdf in SciPy 1.10),
logpmf (scipy.stats.nbinom.logpmf), logpmf_exact. The grid covers k -> 0 (1e-8),
k -> infinity (1e12) and large counts (to 1e5).

SciPy 1.10's nbinom.logpmf is gammaln(x + n) - gammaln(n) - gammaln(x + 1) + ..., whose
difference of two large gammaln values loses about eps * gammaln(n) (1e-3 at n = 1e12), so
logpmf_exact is the same log-PMF summed in 40-digit decimal arithmetic (Python's decimal
module) from its definition, log Gamma(x + k) - log Gamma(k) = sum_{i<x} log(k + i) and
log x! = sum_{i<=x} log i, at exactly the doubles k and R_eff. The script checks that it
agrees with SciPy's pmf wherever that is a normal double, and prints to stderr the worst
disagreement of SciPy's logpmf with it.
"""
import decimal
import math
import sys
from fractions import Fraction

import numpy
import scipy
from scipy.stats import nbinom

RS = [0.05, 0.5, 1.5, 10.0, 100.0]
KS = [1e-8, 1e-4, 0.01, 0.1, 0.5, 1.0, 5.0, 100.0, 1e4, 1e8, 1e12]
XS = [0, 1, 2, 5, 10, 50, 100, 1000, 10000, 100000]

decimal.getcontext().prec = 40
D = decimal.Decimal


def cumulative_logs(start, xs):
    """sum_{i<x} log(start + i) for each x of the increasing list xs, in decimal."""
    out, acc, i = {}, D(0), 0
    for x in xs:
        while i < x:
            acc += (start + i).ln()
            i += 1
        out[x] = acc
    return out


log_fact = cumulative_logs(D(1), XS)  # sum_{i<x} log(1 + i) = log x!
print("# scipy.stats.nbinom, Python %s, NumPy %s, SciPy %s; logpmf_exact: decimal, 40 digits"
      % (sys.version.split()[0], numpy.__version__, scipy.__version__))
print("R,R_eff,k,x,pmf,logpmf,logpmf_exact")
worst_scipy_log = 0.0
for k in KS:
    rising = cumulative_logs(D(k), XS)
    for R in RS:
        p = k / (k + R)
        r_eff = float(Fraction(k) * (1 - Fraction(p)) / Fraction(p))
        dk, dr = D(k), D(r_eff)
        for x in XS:
            exact = float(rising[x] - log_fact[x] + dk * (dk / (dk + dr)).ln() + x * (dr / (dk + dr)).ln())
            pmf, logpmf = nbinom.pmf(x, k, p), nbinom.logpmf(x, k, p)
            if pmf > 1e-300:
                assert abs(math.log(pmf) - exact) <= 1e-9 * max(1, abs(exact)), (R, k, x, pmf, exact)
            worst_scipy_log = max(worst_scipy_log, abs(logpmf - exact) / max(1, abs(exact)))
            print("%r,%.17g,%r,%d,%.17g,%.17g,%.17g" % (R, r_eff, k, x, pmf, logpmf, exact))
print("worst relative disagreement of scipy logpmf with logpmf_exact: %.3g" % worst_scipy_log, file=sys.stderr)
