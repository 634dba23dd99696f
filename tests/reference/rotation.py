"""Reference rotations with SciPy's scipy.spatial.transform.Rotation.

Input (stdin): records, each "exp" followed by a 3x1 rotation vector, or "compose" followed by two 3x1 rotation
vectors a, b and a 3x1 vector v (matrices as written by tests/support.hpp's to_text).
Output: for "exp", the quaternion of Rotation.from_rotvec(a) as a 4x1 matrix in the order (w, x, y, z); for
"compose", the quaternion of Rotation.from_rotvec(a) * Rotation.from_rotvec(b) (R_a R_b: b applied first),
its rotation vector (as_rotvec, angle in [0, pi]) and the composed rotation applied to v.
"""
import sys

import numpy as np
from scipy.spatial.transform import Rotation


def read(tokens):
    r, c = int(next(tokens)), int(next(tokens))
    return np.array([[float(next(tokens)) for _ in range(c)] for _ in range(r)])


def write(a):
    a = np.asarray(a).reshape(-1, 1)
    print(a.shape[0], a.shape[1])
    for row in a:
        print(" ".join("%.17g" % v for v in row))


def wxyz(rot):
    x, y, z, w = rot.as_quat()  # SciPy stores the scalar last
    return [w, x, y, z]


tokens = iter(sys.stdin.read().split())
for kind in tokens:
    if kind == "exp":
        write(wxyz(Rotation.from_rotvec(read(tokens)[:, 0])))
    elif kind == "compose":
        a, b, v = read(tokens)[:, 0], read(tokens)[:, 0], read(tokens)[:, 0]
        c = Rotation.from_rotvec(a) * Rotation.from_rotvec(b)
        write(wxyz(c))
        write(c.as_rotvec())
        write(c.apply(v))
    else:
        sys.exit("unknown record " + kind)
