"""Reference seat-surface and floor aw, and SEAT, on an ISO 8608 random road,
from the frequency-domain random-vibration integral in numpy.

Input (JSON on stdin):
  vehicle:  path to a vehicle TOML (linear: one `damping` per axle, no stops)
  class:    ISO 8608 road class letter, A-H
  speed_m_s: forward speed
  n_min_cycle_m, n_max_cycle_m: the road band (the PSD is zero outside it)
  spacing_m: the profile's sample spacing; the wheels follow straight lines
             between samples

Nothing of roughride's is read but the vehicle file: the script builds its
own M, C, K (bounce-pitch half car, Wong, *Theory of Ground Vehicles*,
ch. 7; a suspended seat is a mass on a spring and damper standing on the
floor point z + x*theta, Rao, *Mechanical Vibrations*, base excitation),
its own road spectrum and its own weighting:

- ISO 8608: Gd(n) = Gd(n0) (n/n0)^-2, n0 = 0.1 cycle/m, with the class value
  Gd(n0) = 16 * 4^k * 1e-6 m^3 (A: k = 0, the geometric mean of the class);
  at speed v the temporal one-sided PSD is S(f) = Gd(f/v) / v (m^2/Hz).
- The profile is samples d apart joined by straight lines: convolution of
  the samples with a triangle of half-width d, whose transfer function is
  sinc^2(n d) (Oppenheim & Schafer, *Discrete-Time Signal Processing*,
  3rd ed., 4.6, linear interpolation), so the road PSD the wheels see is
  S(f) sinc^4(n d) in the band (the images beyond 1/d - n_max, above
  300 Hz here, are left out: the vehicle and Wk pass nothing there).
- The rear wheel sees the front wheel's road tau = wheelbase / v later, so
  the response to the common input is H(f) = H_front(f) + H_rear(f) e^{-j w tau}
  (fully coherent inputs with a pure delay; Newland, *An Introduction to
  Random Vibrations, Spectral and Wavelet Analysis*, ch. 7, multiple inputs;
  Wong, ch. 7, half car on a random road).
- ISO 2631-1:1997 Annex A, Table A.1: Wk (vertical) and Wd (horizontal) as
  products of the band-limiting high- and low-pass, the a-v transition and
  the upward step, evaluated at s = j w.
- aw^2 = integral of |W(f) a(f)|^2 S(f) df over [v n_min, v n_max]
  (Newland, ch. 5: mean square of a linear system's stationary response),
  by the trapezoid rule on a log-spaced grid; the grid is refined until
  the result changes by less than 1e-6 relative.

The Wk formula is checked against ISO 2631-1 Table 3 before use (values
from the table, as recalled: printed factor x 1000 at nominal third-octave
centres); the script fails if it misses by more than 2 %.

Output (JSON on stdout): per seat {"name", "aw" (seat surface for a
suspended seat, the floor point otherwise), "floor_aw", "fore_aft_aw",
"seat_pct" (only for a suspended seat)}, and the band in Hz.
"""
import json
import sys
import tomllib

import numpy as np

N0_CYCLE_M = 0.1

# ISO 2631-1:1997 Table A.1: f1, f2, f3, f4, Q4, f5, Q5, f6, Q6.
TABLE_A1 = {
    "Wk": (0.4, 100.0, 12.5, 12.5, 0.63, 2.37, 0.91, 3.35, 0.91),
    "Wd": (0.4, 100.0, 2.0, 2.0, 0.63, None, None, None, None),
}


def weighting(name, f_hz):
    """|W(j 2 pi f)| of ISO 2631-1 Annex A."""
    f1, f2, f3, f4, q4, f5, q5, f6, q6 = TABLE_A1[name]
    s = 2j * np.pi * np.asarray(f_hz, dtype=float)
    w1, w2, w3, w4 = (2 * np.pi * f for f in (f1, f2, f3, f4))
    q = 1.0 / np.sqrt(2.0)
    hh = s**2 / (s**2 + w1 * s / q + w1**2)
    hl = w2**2 / (s**2 + w2 * s / q + w2**2)
    ht = (1 + s / w3) / (1 + s / (q4 * w4) + s**2 / w4**2)
    hs = 1.0
    if f5 is not None:
        w5, w6 = 2 * np.pi * f5, 2 * np.pi * f6
        hs = (s**2 + s * w5 / q5 + w5**2) / (s**2 + s * w6 / q6 + w6**2)
    return np.abs(hh * hl * ht * hs)


# ISO 2631-1:1997 Table 3, Wk, factor x 1000 (from memory of the table).
WK_TABLE3 = [(0.5, 418), (1.0, 482), (2.0, 531), (4.0, 967), (8.0, 1036), (16.0, 768)]
for f, v in WK_TABLE3:
    got = 1000 * weighting("Wk", f)
    # Nominal centre used for the exact one (up to 1.2 % apart) and the
    # table's rounding: 2 %.
    assert abs(got - v) <= 0.02 * v, f"Wk({f} Hz) = {got / 1000}, Table 3 {v / 1000}"

data = json.load(sys.stdin)
with open(data["vehicle"], "rb") as fh:
    veh = tomllib.load(fh)
speed = float(data["speed_m_s"])
klass = "ABCDEFGH".index(data["class"].upper())
gd_n0 = 16.0 * 4.0**klass * 1e-6

m_body = veh["body"]["mass"]
pitch_j = veh["body"]["pitch_inertia"]
axles = []
for name, sign in (("front", 1.0), ("rear", -1.0)):
    a = veh[name]
    if "damping" not in a or "stop_rate" in a:
        sys.exit(f"{name}: the spectral reference needs a linear axle (one `damping`, no stops)")
    mu = a.get("unsprung_mass", 0.0) or 0.0
    axles.append(
        dict(
            x=sign * a["cg_distance"],
            k=a["spring_rate"],
            c=a["damping"],
            mu=mu,
            kt=a.get("tyre_rate", 0.0),
            ct=a.get("tyre_damping", 0.0),
        )
    )
wheelbase = axles[0]["x"] - axles[1]["x"]
seats = veh.get("seat", [])
suspended = [s for s in seats if "suspension" in s]

# Coordinates: z, theta, one per wheel with an unsprung mass, one per
# suspended seat. Road inputs enter through B_front, B_rear (force per unit
# road displacement, complex: stiffness + j w damping).
n = 2 + sum(1 for a in axles if a["mu"] > 0) + len(suspended)
M = np.zeros((n, n))
C = np.zeros((n, n))
K = np.zeros((n, n))
M[0, 0], M[1, 1] = m_body, pitch_j
b_k = np.zeros((2, n))  # stiffness part of the input, per axle
b_c = np.zeros((2, n))  # damping part
row = 2
for i, a in enumerate(axles):
    e = np.zeros(n)
    e[0], e[1] = 1.0, a["x"]
    if a["mu"] > 0:
        # Tyre between road and wheel; suspension between wheel and body.
        e[row] = -1.0
        M[row, row] = a["mu"]
        K[row, row] += a["kt"]
        C[row, row] += a["ct"]
        b_k[i, row], b_c[i, row] = a["kt"], a["ct"]
        row += 1
    else:
        # Suspension straight onto the road.
        b_k[i] = a["k"] * e
        b_c[i] = a["c"] * e
    K += a["k"] * np.outer(e, e)
    C += a["c"] * np.outer(e, e)
seat_row = {}
for s in suspended:
    sp = s["suspension"]
    e = np.zeros(n)
    e[0], e[1], e[row] = 1.0, s["x"], -1.0
    M[row, row] = sp["mass"]
    K += sp["rate"] * np.outer(e, e)
    C += sp.get("damping", 0.0) * np.outer(e, e)
    seat_row[s.get("name")] = row
    row += 1


def integrate(n_points):
    """Mean squares of every output over the band on an n_points grid."""
    f = np.geomspace(speed * data["n_min_cycle_m"], speed * data["n_max_cycle_m"], n_points)
    w = 2 * np.pi * f
    n_cycle_m = f / speed
    road_psd = gd_n0 * (n_cycle_m / N0_CYCLE_M) ** -2.0 / speed  # S(f), m^2/Hz
    road_psd *= np.sinc(n_cycle_m * data["spacing_m"]) ** 4  # np.sinc(x) = sin(pi x)/(pi x)
    tau = wheelbase / speed
    # Complex input: front at phase 0, rear delayed by tau.
    delay = np.stack([np.ones_like(w), np.exp(-1j * w * tau)])  # (2, nf)
    force = np.einsum("an,af->fn", b_k, delay) + 1j * w[:, None] * np.einsum(
        "an,af->fn", b_c, delay
    )
    dyn = -(w**2)[:, None, None] * M + 1j * w[:, None, None] * C + K
    x = np.linalg.solve(dyn, force[..., None])[..., 0]  # displacement per unit road
    acc = -(w**2)[:, None] * x
    wk2 = weighting("Wk", f) ** 2 * road_psd
    wd2 = weighting("Wd", f) ** 2 * road_psd
    out = []
    for s in seats:
        floor = acc[:, 0] + s["x"] * acc[:, 1]
        fore_aft = -s.get("height", 0.0) * acc[:, 1]
        r = seat_row.get(s.get("name")) if "suspension" in s else None
        surface = acc[:, r] if r is not None else floor
        out.append(
            [
                np.trapezoid(np.abs(surface) ** 2 * wk2, f),
                np.trapezoid(np.abs(floor) ** 2 * wk2, f),
                np.trapezoid(np.abs(fore_aft) ** 2 * wd2, f),
            ]
        )
    return np.array(out)


points = 20_000
ms = integrate(points)
while True:
    points *= 2
    finer = integrate(points)
    done = np.all(np.abs(finer - ms) <= 1e-6 * np.abs(finer))
    ms = finer
    if done or points > 2_000_000:
        break

result = []
for s, (surface, floor, fore_aft) in zip(seats, ms):
    entry = dict(
        name=s.get("name"),
        aw=float(np.sqrt(surface)),
        floor_aw=float(np.sqrt(floor)),
        fore_aft_aw=float(np.sqrt(fore_aft)),
    )
    if "suspension" in s:
        entry["seat_pct"] = 100.0 * entry["aw"] / entry["floor_aw"]
    result.append(entry)
json.dump(
    {
        "band_hz": [speed * data["n_min_cycle_m"], speed * data["n_max_cycle_m"]],
        "grid_points": points,
        "seats": result,
    },
    sys.stdout,
)
