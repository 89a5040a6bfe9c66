"""Reference IRI of a profile, written independently from the ASTM E1926 /
World Bank TP 46 description with scipy's zero-order-hold discretisation
(scipy.signal.cont2discrete) of the reference quarter car.

Input (JSON on stdin): elevation_m (list), spacing_m.
Output (JSON on stdout): iri_m_per_km.
"""
import json
import sys

import numpy as np
from scipy import signal

data = json.load(sys.stdin)
y = np.asarray(data["elevation_m"], dtype=float)
dx = float(data["spacing_m"])
k1, k2, c, mu = 653.0, 63.3, 6.0, 0.15
v = 80.0 / 3.6
A = np.array(
    [
        [0.0, 1.0, 0.0, 0.0],
        [-k2, -c, k2, c],
        [0.0, 0.0, 0.0, 1.0],
        [k2 / mu, c / mu, -(k1 + k2) / mu, -c / mu],
    ]
)
B = np.array([[0.0], [0.0], [0.0], [k1 / mu]])
ad, bd, _, _, _ = signal.cont2discrete((A, B, np.eye(4), np.zeros((4, 1))), dx / v, method="zoh")
# Nearest integer with halves away from zero (Fortran NINT), not Python's
# round-half-to-even: 0.25 / 0.1 = 2.5 samples gives a base of 3.
base = max(1, int(np.floor(0.25 / dx + 0.5)))
i11 = max(1, int(np.floor(11.0 / dx + 0.5)))
s0 = (y[i11] - y[0]) / (i11 * dx)
x = np.array([s0, 0.0, s0, 0.0])
slopes = (y[base:] - y[:-base]) / (base * dx)
total = 0.0
bd = bd[:, 0]
for s in slopes:
    x = ad @ x + bd * s
    total += abs(x[0] - x[2])
json.dump({"iri_m_per_km": 1000.0 * total / len(slopes)}, sys.stdout)
