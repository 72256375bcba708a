#!/usr/bin/env python3
"""Reference values for test/linear/: matrix exponentials and discretizations from scipy.

Run from the repository root:  python3 test/reference/linear/make_fixtures.py
Writes expm.json and discretize.json beside this script. Values are scipy's, printed with
repr() precision; the tests compare against them with tolerances stated in the test files.
"""
import json
import os

import numpy as np
import scipy
from scipy.linalg import expm
from scipy.signal import cont2discrete

here = os.path.dirname(os.path.abspath(__file__))


def mat(a):
    return [[float(v) for v in row] for row in np.atleast_2d(a)]


# Matrices whose 1-norms span the Padé degrees 3, 5, 7, 9, 13 and several squarings.
rng = np.random.default_rng(20240611)
expm_cases = []
for name, A in [
    ("norm 0.01 (degree 3)", 0.01 * np.array([[0.3, -0.5], [0.2, 0.1]])),
    ("norm 0.2 (degree 5)", np.array([[-0.1, 0.05, 0.0], [0.02, -0.08, 0.03], [0.0, 0.04, -0.05]])),
    ("norm 0.9 (degree 7)", np.array([[0.1, 0.5], [-0.4, 0.2]])),
    ("norm 2 (degree 9)", np.array([[-1.0, 0.8], [0.3, -0.6]])),
    ("random 4x4, norm ~ 5", rng.standard_normal((4, 4))),
    ("random 5x5 scaled by 30", 30 * rng.standard_normal((5, 5))),
    ("stiff diagonalisable, norm ~ 1e3", np.array([[-1000.0, 1.0, 0.0], [0.0, -10.0, 1.0], [0.0, 0.0, -0.1]])),
    ("lightly damped oscillator x 50", 50 * np.array([[0.0, 1.0], [-1.0, -0.02]])),
    ("Jordan block 4x4, eigenvalue -2", np.array([[-2.0, 1, 0, 0], [0, -2.0, 1, 0], [0, 0, -2.0, 1], [0, 0, 0, -2.0]])),
    ("badly scaled", np.array([[1.0, 1e4], [1e-4, 1.0]])),
]:
    expm_cases.append({"name": name, "A": mat(A), "expA": mat(expm(A))})

disc_cases = []
systems = [
    (
        "mass-spring-damper, force in, position out",
        np.array([[0.0, 1.0], [-4.0, -0.4]]), np.array([[0.0], [1.0]]), np.array([[1.0, 0.0]]), np.array([[0.0]]),
    ),
    (
        "three states, two inputs, two outputs, with feedthrough",
        np.array([[-1.0, 2.0, 0.0], [-2.0, -1.0, 0.5], [0.0, 0.3, -3.0]]),
        np.array([[1.0, 0.0], [0.0, 2.0], [0.5, -1.0]]),
        np.array([[1.0, 0.0, 1.0], [0.0, 1.0, -0.5]]),
        np.array([[0.1, 0.0], [0.0, -0.2]]),
    ),
]
for name, A, B, C, D in systems:
    for T in (0.01, 0.25):
        for method in ("zoh", "bilinear", "euler"):
            Ad, Bd, Cd, Dd, _ = cont2discrete((A, B, C, D), T, method=method)
            disc_cases.append({
                "name": name, "T": T, "method": method,
                "A": mat(A), "B": mat(B), "C": mat(C), "D": mat(D),
                "Ad": mat(Ad), "Bd": mat(Bd), "Cd": mat(Cd), "Dd": mat(Dd),
            })

meta = {"generator": "test/reference/linear/make_fixtures.py", "scipy": scipy.__version__, "numpy": np.__version__}
with open(os.path.join(here, "expm.json"), "w") as f:
    json.dump({"meta": meta, "cases": expm_cases}, f, indent=1)
with open(os.path.join(here, "discretize.json"), "w") as f:
    json.dump({"meta": meta, "cases": disc_cases}, f, indent=1)
print(f"wrote {len(expm_cases)} expm and {len(disc_cases)} discretization cases")
