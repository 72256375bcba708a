"""Reference trajectories for two of our own nonlinear loops, computed independently with
scipy.integrate.solve_ivp (method DOP853, rtol 1e-12, atol 1e-14), written as JSON beside this
script. The equations are written out here by hand from the .loop files; the limits are clamps
and the integration restarts at every breakpoint of the reference signal.

  boom.json          samples/boom.loop, start tilt 0.5 rad, 8 s: tilt and rate every 0.05 s
  orifice-tank.json  samples/orifice-tank.loop, 300 s: level and valve flow every 0.5 s

Run:  python3 test/reference/runs/make_runs.py
"""
import json
import math
import os

import numpy as np
import scipy
from scipy.integrate import solve_ivp

HERE = os.path.dirname(os.path.abspath(__file__))
RTOL, ATOL = 1e-12, 1e-14


def clamp(v, lo, hi):
    return lo if v < lo else hi if v > hi else v


def boom():
    arm, load, drag, g = 0.6, 0.9, 0.02, 9.80665
    inertia = load * arm ** 2
    kp, kd, wf = 14.0, 2.2, 25.0

    def drive(x):
        tilt, rate, xf = x
        e = 0.0 - tilt
        # kp + kd*s/(1 + s/wf): xf is the error through the low-pass wf/(s + wf)
        return clamp(kp * e + kd * wf * (e - xf), -4.0, 4.0)

    def f(t, x):
        tilt, rate, xf = x
        e = 0.0 - tilt
        return [rate, (g / arm) * math.sin(tilt) - drag / inertia * rate + drive(x) / inertia, wf * (e - xf)]

    # the filter state starts at 0, as the controller's hidden state does
    t = np.linspace(0.0, 8.0, 161)
    sol = solve_ivp(f, (0.0, 8.0), [0.5, 0.0, 0.0], method="DOP853", rtol=RTOL, atol=ATOL, t_eval=t)
    assert sol.success
    return {"loop": "Upright", "t": t.tolist(), "signals": {"Boom.tilt": sol.y[0].tolist(), "Boom.rate": sol.y[1].tolist()}}


def tank():
    area, orifice, cd, g = 0.5, 0.002, 0.62, 9.80665
    kp, ki, tt = 0.02, 0.002, 10.0

    def ref(t):
        return 1.0 + (0.5 if t >= 20.0 else 0.0)

    def law(t, x):
        level, xi = x
        e = ref(t) - level
        u = kp * e + ki * xi
        return e, u, clamp(u, 0.0, 0.01)

    def f(t, x):
        level, xi = x
        e, u, us = law(t, x)
        return [(us - cd * orifice * math.sqrt(2 * g * max(level, 0.0))) / area, e + (us - u) / (ki * tt)]

    ts, level, flow = [], [], []
    x0 = [1.0, 0.0]
    for (a, b, n) in [(0.0, 20.0, 41), (20.0, 300.0, 561)]:
        t = np.linspace(a, b, n)
        sol = solve_ivp(f, (a, b), x0, method="DOP853", rtol=RTOL, atol=ATOL, t_eval=t, first_step=1e-3)
        assert sol.success
        keep = slice(0, n - 1) if b < 300.0 else slice(0, n)
        for k in range(n)[keep]:
            ts.append(float(t[k]))
            level.append(float(sol.y[0][k]))
            flow.append(law(t[k], sol.y[:, k])[2])
        x0 = sol.y[:, -1].tolist()
    return {"loop": "Fill", "t": ts, "signals": {"Tank.height": level, "Valve.flow": flow}}


def main():
    for name, make in [("boom.json", boom), ("orifice-tank.json", tank)]:
        data = make()
        data["source"] = f"scipy {scipy.__version__} solve_ivp DOP853 rtol={RTOL} atol={ATOL}"
        with open(os.path.join(HERE, name), "w") as fh:
            json.dump(data, fh, indent=0)
        print("wrote", name, len(data["t"]), "samples")


if __name__ == "__main__":
    main()
