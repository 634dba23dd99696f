"""Independent NumPy implementation of the scaled unscented transform of a polar (range, bearing) Gaussian to
Cartesian coordinates, with the sigma-point order of shared/DESIGN.md: chi_0 = m, chi_i = m + L_i,
chi_(n+i) = m - L_i, L the lower Cholesky factor of (n + lambda) P.

Input (stdin): alpha beta kappa on one line, then the mean (2x1) and covariance (2x2) as written by
tests/support.hpp's to_text. Output: the transformed mean (2x1), covariance (2x2) and cross-covariance (2x2).
"""
import sys

import numpy as np


def read(tokens):
    r, c = int(next(tokens)), int(next(tokens))
    return np.array([[float(next(tokens)) for _ in range(c)] for _ in range(r)])


def write(a):
    print(a.shape[0], a.shape[1])
    for row in a:
        print(" ".join("%.17g" % v for v in row))


tokens = iter(sys.stdin.read().split())
alpha, beta, kappa = float(next(tokens)), float(next(tokens)), float(next(tokens))
m, p = read(tokens)[:, 0], read(tokens)
n = len(m)
lam = alpha * alpha * (n + kappa) - n
l = np.linalg.cholesky((n + lam) * p)
chi = [m] + [m + l[:, i] for i in range(n)] + [m - l[:, i] for i in range(n)]
wm = np.full(2 * n + 1, 1.0 / (2 * (n + lam)))
wc = wm.copy()
wm[0] = lam / (n + lam)
wc[0] = lam / (n + lam) + 1 - alpha * alpha + beta
y = np.array([[c[0] * np.cos(c[1]), c[0] * np.sin(c[1])] for c in chi])
ybar = wm @ y
dy = y - ybar
dx = np.array(chi) - m
write(ybar.reshape(2, 1))
write((wc[:, None] * dy).T @ dy)
write((wc[:, None] * dx).T @ dy)
