#!/usr/bin/env python3
"""Independent margin figures for test/linear/margins-fixture.test.ts, computed with numpy by a
different method from the one under test: the gain crossovers are the positive real roots of the
polynomial |N(jw)|^2 - |D(jw)|^2 in w, the phase crossovers those of Im(N(jw) * conj(D(jw))) = 0
with Re(N(jw) conj(D(jw))) < 0. Each root is polished by a few Newton steps (numpy.polyder).

Run from the repository root:  python3 test/reference/linear/make_margins.py   (writes margins.json)
"""
import json
import os

import numpy as np

here = os.path.dirname(os.path.abspath(__file__))


def at_jw(p):
    """Coefficients (highest power first) in w of p(jw), as a complex polynomial."""
    n = len(p) - 1
    return np.array([c * (1j) ** (n - i) for i, c in enumerate(p)], dtype=complex)


def conj_poly(q):
    return np.conj(q)


def real_positive_roots(poly):
    poly = np.real_if_close(poly, tol=1e6)
    poly = np.trim_zeros(np.real(poly), "f")
    if len(poly) <= 1:
        return []
    d = np.polyder(poly)
    out = []
    for r in np.roots(poly):
        if abs(r.imag) > 1e-7 * max(1.0, abs(r)) or r.real <= 0:
            continue
        x = r.real
        for _ in range(5):
            dv = np.polyval(d, x)
            if dv == 0:
                break
            x -= np.polyval(poly, x) / dv
        out.append(float(x))
    out.sort()
    return [x for i, x in enumerate(out) if i == 0 or x - out[i - 1] > 1e-9 * x]


cases = [
    ("2*sqrt(2)/(s+1)^3", [2 * np.sqrt(2)], [1, 3, 3, 1]),
    ("24/((s-1)(s+3)(s+4))", [24], list(np.poly([1, -3, -4]))),
    ("10(s+2)/(s(s+1)(s+5))", [10, 20], [1, 6, 5, 0]),
    ("0.5(s^2+0.04s+45)/(s(s^2+0.04s+25))", [0.5, 0.02, 22.5], [1, 0.04, 25, 0]),
    ("16/((s+0.7)(s+1.4)...(s+5.6)), eight real poles", [16], list(np.poly([-0.7 * (i + 1) for i in range(8)]))),
    ("5(s^2+2s+2)/((s+0.2)(s+1)(s^2+0.6s+9))", list(5 * np.array([1, 2, 2])), list(np.polymul(np.poly([-0.2, -1]), [1, 0.6, 9]))),
]
out = []
for name, num, den in cases:
    N, D = at_jw(num), at_jw(den)
    mag = np.polysub(np.polymul(N, conj_poly(N)), np.polymul(D, conj_poly(D)))
    cross = np.polymul(N, conj_poly(D))
    gains = []
    for w in real_positive_roots(np.real(mag)):
        L = np.polyval(num, 1j * w) / np.polyval(den, 1j * w)
        pm = 180 + np.degrees(np.angle(L))
        pm = pm - 360 * np.ceil((pm - 180) / 360)
        gains.append({"omega": w, "phaseMargin": float(pm)})
    phases = []
    for w in real_positive_roots(np.imag(cross)):
        L = np.polyval(num, 1j * w) / np.polyval(den, 1j * w)
        if L.real < 0:
            phases.append({"omega": w, "gain": float(1 / abs(L))})
    out.append({"name": name, "num": [float(c) for c in num], "den": [float(c) for c in den],
                "gainCrossings": gains, "phaseCrossings": phases})

with open(os.path.join(here, "margins.json"), "w") as f:
    json.dump({"meta": {"generator": "test/reference/linear/make_margins.py", "numpy": np.__version__}, "cases": out}, f, indent=1)
for c in out:
    print(c["name"], c["gainCrossings"], c["phaseCrossings"])
