"""Reference matrix exponentials and Van Loan discretizations with SciPy.

Input (stdin): a sequence of records, each "expm" followed by a matrix, or "vanloan" followed by A, Qc and a 1x1
matrix holding dt (matrices as written by tests/support.hpp's to_text).
Output: for "expm", scipy.linalg.expm of the matrix; for "vanloan", F = expm(A dt) and
Q = scipy.integrate.quad_vec of expm(A s) Qc expm(A s)^T over [0, dt] (direct quadrature of the defining
integral, independent of Van Loan's block-matrix trick), each as a matrix in the same format.
"""
import sys

import numpy as np
from scipy.integrate import quad_vec
from scipy.linalg import expm


def read(tokens):
    r, c = int(next(tokens)), int(next(tokens))
    return np.array([[float(next(tokens)) for _ in range(c)] for _ in range(r)])


def write(a):
    print(a.shape[0], a.shape[1])
    for row in a:
        print(" ".join("%.17g" % v for v in row))


tokens = iter(sys.stdin.read().split())
for kind in tokens:
    if kind == "expm":
        write(expm(read(tokens)))
    elif kind == "vanloan":
        a, qc, dt = read(tokens), read(tokens), read(tokens)[0, 0]
        write(expm(a * dt))
        q, _ = quad_vec(lambda s: expm(a * s) @ qc @ expm(a * s).T, 0.0, dt, epsabs=1e-15, epsrel=1e-13)
        write(q)
    else:
        sys.exit("unknown record " + kind)
