# Steady-state predicted covariance of a Kalman filter by SciPy's discrete algebraic Riccati solver.
# stdin: F, Q, H, R as "rows cols" headers followed by rows. stdout: X (steady predicted covariance), K (gain).
# Dual mapping: scipy.linalg.solve_discrete_are(a, b, q, r) solves
#   aᵀXa − X − aᵀXb (r + bᵀXb)⁻¹ bᵀXa + q = 0;
# with a = Fᵀ, b = Hᵀ this is the filter Riccati equation X = F X Fᵀ − F X Hᵀ (H X Hᵀ + R)⁻¹ H X Fᵀ + Q.
import sys
import numpy as np
from scipy.linalg import solve_discrete_are


def read(tokens):
    r, c = int(next(tokens)), int(next(tokens))
    return np.array([float(next(tokens)) for _ in range(r * c)]).reshape(r, c)


def write(m):
    print(m.shape[0], m.shape[1])
    for row in m:
        print(" ".join(repr(float(v)) for v in row))


tokens = iter(sys.stdin.read().split())
F, Q, H, R = (read(tokens) for _ in range(4))
X = solve_discrete_are(F.T, H.T, Q, R)
K = X @ H.T @ np.linalg.inv(H @ X @ H.T + R)
write(X)
write(K)
