"""Exact posterior of the ill-conditioned measurement example, in rational arithmetic.

Input (stdin): the 2x3 matrix H, the 2x2 matrix R, the 2x1 vector z, the prior mean (3x1) and covariance (3x3),
each as written by tests/support.hpp's to_text (the binary values of the test's own scalars, printed with
%.17g: float(text) recovers each exactly, and Fraction(float) is exact).
Output: the posterior covariance P+ = (P0^-1 + H^T R^-1 H)^-1 and mean x+ = x0 + P+ H^T R^-1 (z - H x0)
(information form; the exact Bayes posterior of a linear-Gaussian measurement), rounded once to double.
"""
import sys
from fractions import Fraction


def read(tokens):
    r, c = int(next(tokens)), int(next(tokens))
    return [[Fraction(float(next(tokens))) for _ in range(c)] for _ in range(r)]


def mul(a, b):
    return [[sum(a[i][k] * b[k][j] for k in range(len(b))) for j in range(len(b[0]))] for i in range(len(a))]


def tr(a):
    return [list(col) for col in zip(*a)]


def inv(a):
    n = len(a)
    m = [row[:] + [Fraction(int(i == j)) for j in range(n)] for i, row in enumerate(a)]
    for c in range(n):
        p = next(r for r in range(c, n) if m[r][c] != 0)
        m[c], m[p] = m[p], m[c]
        pivot = m[c][c]
        m[c] = [v / pivot for v in m[c]]
        for r in range(n):
            if r != c and m[r][c] != 0:
                f = m[r][c]
                m[r] = [vr - f * vc for vr, vc in zip(m[r], m[c])]
    return [row[n:] for row in m]


def add(a, b):
    return [[x + y for x, y in zip(ra, rb)] for ra, rb in zip(a, b)]


def sub(a, b):
    return [[x - y for x, y in zip(ra, rb)] for ra, rb in zip(a, b)]


def write(a):
    print(len(a), len(a[0]))
    for row in a:
        print(" ".join("%.17g" % float(v) for v in row))


tokens = iter(sys.stdin.read().split())
h, r, z, x0, p0 = read(tokens), read(tokens), read(tokens), read(tokens), read(tokens)
ri = inv(r)
p = inv(add(inv(p0), mul(mul(tr(h), ri), h)))
x = add(x0, mul(mul(mul(p, tr(h)), ri), sub(z, mul(h, x0))))
write(p)
write(x)
