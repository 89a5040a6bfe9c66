"""Reference modes of a bounce-pitch vehicle with scipy.linalg.

Input (JSON on stdin): {"vehicle": path to a vehicle TOML}. The script
builds M, C, K itself from the file (equations of motion of the
bounce-pitch half car, Gillespie, Fundamentals of Vehicle Dynamics, ch. 5;
Wong, Theory of Ground Vehicles, ch. 7), so roughride's own assembly is
checked too. A seat with a [seat.suspension] adds its moving mass on a
spring and damper standing on the body point z + x theta (a base-excited
mass on a spring; Rao, Mechanical Vibrations, base excitation), one
coordinate per suspended seat after the wheels.

Output (JSON on stdout):
  undamped_hz: ascending, from scipy.linalg.eigh(K, M)
  pairs: [{"damped_hz", "damping_ratio", "re", "im"}] for every eigenvalue
         with Im > 0 of the state matrix, from scipy.linalg.eig(A)
  real_roots: real eigenvalues of A (overdamped modes)
"""
import json
import sys
import tomllib

import numpy as np
from scipy import linalg

data = json.load(sys.stdin)
with open(data["vehicle"], "rb") as fh:
    v = tomllib.load(fh)

m = v["body"]["mass"]
J = v["body"]["pitch_inertia"]
axles = []
for name, sign in (("front", 1.0), ("rear", -1.0)):
    a = v[name]
    damping = a.get("damping")
    if damping is None:
        damping = 0.5 * (a["damping_bump"] + a["damping_rebound"])
    mu = a.get("unsprung_mass", 0.0) or 0.0
    axles.append(
        dict(
            x=sign * a["cg_distance"],
            k=a["spring_rate"],
            c=damping,
            mu=mu,
            kt=a.get("tyre_rate", 0.0) if mu > 0 else 0.0,
            ct=a.get("tyre_damping", 0.0) if mu > 0 else 0.0,
        )
    )

seats = [
    dict(x=s["x"], **s["suspension"]) for s in v.get("seat", []) if "suspension" in s
]

# Coordinates: z, theta, one wheel per axle with an unsprung mass, then one
# per suspended seat.
n = 2 + sum(1 for a in axles if a["mu"] > 0) + len(seats)
M = np.zeros((n, n))
C = np.zeros((n, n))
K = np.zeros((n, n))
M[0, 0] = m
M[1, 1] = J
w = 2
for a in axles:
    # Suspension between body point (z + x theta) and wheel (or road).
    e = np.zeros(n)
    e[0] = 1.0
    e[1] = a["x"]
    if a["mu"] > 0:
        e[w] = -1.0
        M[w, w] = a["mu"]
        K[w, w] += a["kt"]
        C[w, w] += a["ct"]
        w += 1
    K += a["k"] * np.outer(e, e)
    C += a["c"] * np.outer(e, e)
for s in seats:
    # Seat spring and damper between the floor point and the seat mass.
    e = np.zeros(n)
    e[0] = 1.0
    e[1] = s["x"]
    e[w] = -1.0
    M[w, w] = s["mass"]
    K += s["rate"] * np.outer(e, e)
    C += s.get("damping", 0.0) * np.outer(e, e)
    w += 1

undamped = np.sqrt(np.sort(linalg.eigh(K, M, eigvals_only=True))) / (2 * np.pi)

Minv = np.linalg.inv(M)
A = np.block([[np.zeros((n, n)), np.eye(n)], [-Minv @ K, -Minv @ C]])
lam = linalg.eig(A, right=False)
pairs = []
real_roots = []
for l in lam:
    if abs(l.imag) <= 1e-12 * abs(l):
        real_roots.append(float(l.real))
    elif l.imag > 0:
        pairs.append(
            dict(
                damped_hz=float(l.imag / (2 * np.pi)),
                damping_ratio=float(-l.real / abs(l)),
                re=float(l.real),
                im=float(l.imag),
            )
        )
pairs.sort(key=lambda p: p["damped_hz"])
json.dump(
    {"undamped_hz": undamped.tolist(), "pairs": pairs, "real_roots": sorted(real_roots)},
    sys.stdout,
)
