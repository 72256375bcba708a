#!/usr/bin/env python3
"""Reference trajectories of three small nonlinear systems of our own, for the integrator tests.

Run from the repository root:  python3 test/reference/ode/make_fixtures.py
Writes test/reference/ode/<name>.json. Each system is integrated with scipy.integrate.solve_ivp,
method DOP853, rtol = 1e-12, atol = 1e-14, restarting at every grid time so that no interpolant is
involved. As an estimate of the fixture's own accuracy, the same run is repeated with Radau at the
same tolerances and the largest difference is stored as "crossCheckMaxDiff".

The formulas must stay identical to those in test/reference/ode/problems.ts.
"""
import json
import math
import os

import numpy as np
import scipy
from scipy.integrate import solve_ivp

HERE = os.path.dirname(os.path.abspath(__file__))
RTOL = 1e-12
ATOL = 1e-14


def pendulum_tanh(p):
    a, c, tau, k, r = p["a"], p["c"], p["tau"], p["k"], p["r"]

    def f(t, y):
        return [y[1], -a * math.sin(y[0]) - c * y[1] + tau * math.tanh(k * (r - y[0]))]

    def jac(t, y):
        th = math.tanh(k * (r - y[0]))
        return [[0.0, 1.0], [-a * math.cos(y[0]) - tau * k * (1 - th * th), -c]]

    return f, jac


def duffing(p):
    delta, alpha, beta, gamma, omega = p["delta"], p["alpha"], p["beta"], p["gamma"], p["omega"]

    def f(t, y):
        return [y[1], -delta * y[1] - alpha * y[0] - beta * y[0] ** 3 + gamma * math.cos(omega * t)]

    def jac(t, y):
        return [[0.0, 1.0], [-alpha - 3 * beta * y[0] ** 2, -delta]]

    return f, jac


def motor(p):
    L, R, ke, kt, J, b, Tf, ws, U, s, freq = (p[k] for k in ("L", "R", "ke", "kt", "J", "b", "Tf", "ws", "U", "s", "freq"))

    def f(t, y):
        u = U * math.tanh(s * math.sin(2 * math.pi * freq * t))
        return [(u - R * y[0] - ke * y[1]) / L, (kt * y[0] - b * y[1] - Tf * math.tanh(y[1] / ws)) / J]

    def jac(t, y):
        th = math.tanh(y[1] / ws)
        return [[-R / L, -ke / L], [kt / J, (-b - (Tf / ws) * (1 - th * th)) / J]]

    return f, jac


SYSTEMS = [
    {
        "name": "pendulum-tanh",
        "description": "damped pendulum with a saturating (tanh) position controller: "
        "th'' = -a sin th - c th' + tau tanh(k (r - th))",
        "params": {"a": 9.81, "c": 0.3, "tau": 6.0, "k": 4.0, "r": 0.5},
        "x0": [2.5, 0.0],
        "t1": 10.0,
        "samples": 40,
        "make": pendulum_tanh,
    },
    {
        "name": "duffing",
        "description": "forced hardening Duffing oscillator: x'' = -delta x' - alpha x - beta x^3 + gamma cos(omega t)",
        "params": {"delta": 0.2, "alpha": 1.0, "beta": 0.5, "gamma": 0.8, "omega": 1.3},
        "x0": [1.0, 0.0],
        "t1": 15.0,
        "samples": 60,
        "make": duffing,
    },
    {
        "name": "motor",
        "description": "DC motor, fast current loop, smooth Coulomb friction, saturated sine drive: "
        "L i' = u - R i - ke w, J w' = kt i - b w - Tf tanh(w/ws), u = U tanh(s sin(2 pi freq t))",
        "params": {"L": 2e-3, "R": 1.2, "ke": 0.05, "kt": 0.05, "J": 2e-5, "b": 1e-5, "Tf": 2e-3, "ws": 1.0, "U": 12.0, "s": 3.0, "freq": 2.0},
        "x0": [0.0, 0.0],
        "t1": 1.0,
        "samples": 50,
        "make": motor,
    },
]


def trajectory(f, jac, x0, grid, method):
    xs = [list(x0)]
    y = np.array(x0, dtype=float)
    for ta, tb in zip(grid[:-1], grid[1:]):
        kw = {"jac": jac} if method == "Radau" else {}
        sol = solve_ivp(f, (ta, tb), y, method=method, rtol=RTOL, atol=ATOL, **kw)
        if sol.status != 0:
            raise RuntimeError(f"{method} failed on [{ta}, {tb}]: {sol.message}")
        y = sol.y[:, -1]
        xs.append([float(v) for v in y])
    return xs


def main():
    for spec in SYSTEMS:
        f, jac = spec["make"](spec["params"])
        m = spec["samples"]
        grid = [spec["t1"] * i / m for i in range(m + 1)]
        xs = trajectory(f, jac, spec["x0"], grid, "DOP853")
        check = trajectory(f, jac, spec["x0"], grid, "Radau")
        diff = max(abs(a - b) for ra, rb in zip(xs, check) for a, b in zip(ra, rb))
        out = {
            "generator": "test/reference/ode/make_fixtures.py",
            "scipy": scipy.__version__,
            "method": "DOP853",
            "rtol": RTOL,
            "atol": ATOL,
            "name": spec["name"],
            "description": spec["description"],
            "params": spec["params"],
            "t": grid,
            "x": xs,
            "crossCheck": "Radau, same tolerances",
            "crossCheckMaxDiff": diff,
        }
        path = os.path.join(HERE, spec["name"] + ".json")
        with open(path, "w") as fh:
            json.dump(out, fh, indent=1)
            fh.write("\n")
        print(f"{path}: {len(grid)} samples, DOP853 vs Radau max diff {diff:.2e}")


if __name__ == "__main__":
    main()
