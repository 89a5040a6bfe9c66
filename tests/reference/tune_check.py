"""Independent reference for `roughride tune`'s frequency-domain objective
and its optimum, in numpy and scipy only.

Reads JSON on stdin: the half car (masses, inertia, axle positions, rates),
the seat position, speeds and weights, the ISO 8608 road (Gd(n0) of each
class, n0, the band and the profile spacing), the parameters with their
bounds and the points at which to report the objective. Prints JSON: the
objective at those points and the optimum scipy.optimize finds.

The objective is the weighted mean, over classes and speeds, of the
predicted seat aw:
    aw^2 = integral over the road band of |H(f)|^2 |W(f)|^2 G_z(f) df,
with H the seat acceleration per metre of road at the front wheel (the
rear wheel a wheelbase later), from (K - w^2 M + j w C) Q = (K_r + j w C_r) R
(Thomson, Theory of Vibration with Applications, ch. 6); G_z(f) = Gd(f/v)/v
with Gd(n) = Gd(n0) (n/n0)^-2 (ISO 8608) times sinc^4(n * spacing) for a
profile held linear between samples; and W the ISO 2631-1 Wk weighting
(Annex A: band limiting, acceleration-velocity transition, upward step).
Integrated by the trapezoid rule on a dense geometric grid.
"""

import json
import sys

import numpy as np
from scipy import optimize
from scipy.integrate import trapezoid


def wk_magnitude(f):
    """|Wk(f)| from ISO 2631-1:1997 Annex A, Table A.2 (Wk)."""
    s = 2j * np.pi * f
    w1, w2 = 2 * np.pi * 0.4, 2 * np.pi * 100.0
    w3, w4, q4 = 2 * np.pi * 12.5, 2 * np.pi * 12.5, 0.63
    w5, q5, w6, q6 = 2 * np.pi * 2.37, 0.91, 2 * np.pi * 3.35, 0.91
    q1 = 1 / np.sqrt(2)
    hh = s**2 / (s**2 + w1 * s / q1 + w1**2)
    hl = w2**2 / (s**2 + w2 * s / q1 + w2**2)
    ht = (1 + s / w3) / (1 + s / (w4 * q4) + s**2 / w4**2)
    hs = (1 + s / (w5 * q5) + s**2 / w5**2) * (w5**2 / w6**2) / (1 + s / (w6 * q6) + s**2 / w6**2)
    return np.abs(hh * hl * ht * hs)


def matrices(car):
    """M, C, K, K_r, C_r of the half car, q = [z, theta, z_wf, z_wr]."""
    n = 4
    M = np.diag([car["mass"], car["pitch_inertia"], car["axles"][0]["unsprung"], car["axles"][1]["unsprung"]])
    K = np.zeros((n, n))
    C = np.zeros((n, n))
    Kr = np.zeros((n, 2))
    Cr = np.zeros((n, 2))
    for i, ax in enumerate(car["axles"]):
        w = 2 + i
        # Suspension between body point z + x theta and the wheel: the
        # coupling vector of the relative displacement (wheel - body).
        b = np.zeros(n)
        b[0], b[1], b[w] = -1.0, -ax["x"], 1.0
        K += ax["spring"] * np.outer(b, b)
        C += ax["damping"] * np.outer(b, b)
        K[w, w] += ax["tyre_rate"]
        C[w, w] += ax["tyre_damping"]
        Kr[w, i] = ax["tyre_rate"]
        Cr[w, i] = ax["tyre_damping"]
    return M, C, K, Kr, Cr


def aw_of(car, seat_x, speed, road, weighting):
    """Predicted aw at `speed` on the class-C-shaped road of Gd(n0) = 1."""
    M, C, K, Kr, Cr = matrices(car)
    wheelbase = car["axles"][0]["x"] - car["axles"][1]["x"]
    lo, hi = road["n_min"] * speed, road["n_max"] * speed
    f = np.geomspace(lo, hi, road["points"])
    w = 2 * np.pi * f
    A = K[None, :, :] - (w**2)[:, None, None] * M[None, :, :] + 1j * w[:, None, None] * C[None, :, :]
    delay = np.exp(-1j * w * wheelbase / speed)
    R = np.stack([np.ones_like(delay), delay], axis=1)
    rhs = (Kr[None, :, :] + 1j * w[:, None, None] * Cr[None, :, :]) @ R[:, :, None]
    Q = np.linalg.solve(A, rhs)[:, :, 0]
    h = -(w**2) * (Q[:, 0] + seat_x * Q[:, 1])
    n = f / speed
    gz = (n / road["n0"]) ** -2 / speed * np.sinc(n * road["spacing"]) ** 4
    wt = wk_magnitude(f) ** 2 if weighting == "wk" else 1.0
    g = np.abs(h) ** 2 * wt * gz
    return np.sqrt(trapezoid(g, f))


def objective(car, seat_x, speeds, weights, classes_gd, road, weighting):
    per_speed = [aw_of(car, seat_x, v, road, weighting) for v in speeds]
    total, wsum = 0.0, 0.0
    for gd in classes_gd:
        for a, wgt in zip(per_speed, weights):
            total += wgt * a * np.sqrt(gd)
            wsum += wgt
    return total / wsum


def with_values(car, seat_x, params, x):
    car = json.loads(json.dumps(car))
    for p, v in zip(params, x):
        table, key = p["key"].split(".")
        ax = car["axles"][0 if table == "front" else 1]
        ax[{"damping": "damping", "spring_rate": "spring"}[key]] = v
    return car


def main():
    inp = json.load(sys.stdin)
    car, seat_x = inp["vehicle"], inp["seat_x"]
    params = inp["parameters"]
    lo = np.array([p["lo"] for p in params])
    hi = np.array([p["hi"] for p in params])

    def f_phys(x):
        c = with_values(car, seat_x, params, x)
        return objective(c, seat_x, inp["speeds"], inp["weights"], inp["classes_gd"], inp["road"], inp["weighting"])

    def f_unit(u):
        return f_phys(lo + np.clip(u, 0, 1) * (hi - lo))

    best = None
    for u0 in inp["starts"]:
        r = optimize.minimize(f_unit, np.array(u0), method="L-BFGS-B", bounds=[(0, 1)] * len(params),
                              options={"ftol": 1e-13, "gtol": 1e-9})
        if best is None or r.fun < best.fun:
            best = r
    x = lo + best.x * (hi - lo)
    json.dump({
        "optimum": list(map(float, x)),
        "objective": float(best.fun),
        "at": [float(f_phys(np.array(p))) for p in inp["points"]],
    }, sys.stdout)


if __name__ == "__main__":
    main()
