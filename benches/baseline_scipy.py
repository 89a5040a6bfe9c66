"""The scripted baseline that benches/compare.sh times against roughride.

What a ride engineer would write by hand with numpy and scipy for the same
job as `roughride simulate --solver exact --json`: read the profile CSV,
build the linear half-car state-space model from the vehicle TOML, run it
with scipy.signal.lsim (first-order hold, the same discretisation as the
exact solver) on the same 1 kHz output grid and the same road inputs
(front wheel at x0 + v·t, rear wheel one wheelbase behind, held at the
first and last elevation, relative to the first sample), and reduce the
outputs to the same r.m.s. values and ISO 2631-1 measures.

The model is assembled independently of roughride, from the equations of
motion of the bounce–pitch model with unsprung masses (Gillespie,
*Fundamentals of Vehicle Dynamics*, SAE 1992, ch. 5; Wong, *Theory of
Ground Vehicles*, 4th ed., ch. 7):
M q'' + C q' + K q = K_r r + C_r r' with q = [z, theta, z_uf, z_ur].

The Wk weighting is the ISO 2631-1 Annex A analog filter taken to the
digital domain with scipy.signal.bilinear_zpk (the usual scripted route;
roughride's magnitude-matched design differs from it by up to about 1 %
near 80 Hz, so aw is reported, not compared).

Usage: baseline_scipy.py --vehicle V.toml --profile P.csv --speed 20
       [--rate 1000] [--out FILE]   (one JSON object on stdout or in FILE)
"""

import argparse
import json
import sys
import tomllib

import numpy as np
from scipy import signal

G = 9.80665  # standard gravity, m/s^2 (ISO 80000-3)


def read_vehicle(path):
    with open(path, "rb") as f:
        v = tomllib.load(f)
    axles = []
    for key, sign in (("front", 1.0), ("rear", -1.0)):
        a = v[key]
        if "damping" not in a:
            sys.exit(f"{path}: [{key}] needs a linear `damping` for the linear model")
        axles.append(
            dict(
                x=sign * a["cg_distance"],
                k=a["spring_rate"],
                c=a["damping"],
                mu=a.get("unsprung_mass", 0.0),
                kt=a.get("tyre_rate", 0.0),
                ct=a.get("tyre_damping", 0.0),
            )
        )
    seats = [
        (s.get("name", f"seat{i + 1}"), float(s["x"])) for i, s in enumerate(v["seat"])
    ]
    return v["body"]["mass"], v["body"]["pitch_inertia"], axles, seats


def model(mass, inertia, axles):
    """M, C, K, K_r, C_r and the wheel coordinate of each axle (or None)."""
    wheel = []
    n = 2
    for a in axles:
        wheel.append(n if a["mu"] > 0 else None)
        n += a["mu"] > 0
    M = np.zeros((n, n))
    K = np.zeros((n, n))
    C = np.zeros((n, n))
    Kr = np.zeros((n, 2))
    Cr = np.zeros((n, 2))
    M[0, 0], M[1, 1] = mass, inertia
    for i, a in enumerate(axles):
        e = np.zeros(n)
        e[0], e[1] = 1.0, a["x"]  # body point z + x*theta
        w = wheel[i]
        if w is not None:
            M[w, w] = a["mu"]
            e[w] = -1.0  # suspension between body point and wheel
            K += a["k"] * np.outer(e, e)
            C += a["c"] * np.outer(e, e)
            K[w, w] += a["kt"]
            C[w, w] += a["ct"]
            Kr[w, i] += a["kt"]
            Cr[w, i] += a["ct"]
        else:  # body on the spring and damper, which rest on the road
            K += a["k"] * np.outer(e, e)
            C += a["c"] * np.outer(e, e)
            Kr[:, i] += a["k"] * e
            Cr[:, i] += a["c"] * e
    return M, C, K, Kr, Cr, wheel, n


def read_profile(path):
    with open(path) as f:
        header = [h.strip() for h in f.readline().split(",")]
    cols = (header.index("distance_m"), header.index("elevation_m"))
    xz = np.loadtxt(path, delimiter=",", skiprows=1, usecols=cols, comments="#")
    return xz[:, 0], xz[:, 1]


def wk_sos(fs):
    """ISO 2631-1 Annex A Wk (Table A.1 parameters), bilinear to the z-domain."""
    w = lambda f: 2 * np.pi * f
    q = 1 / np.sqrt(2)
    w1, w2, w3, w4, w5, w6 = w(0.4), w(100.0), w(12.5), w(12.5), w(2.37), w(3.35)
    q4, q5, q6 = 0.63, 0.91, 0.91
    sections = [  # (numerator, denominator) in s
        ([1, 0, 0], [1, w1 / q, w1 * w1]),  # high-pass Hh
        ([w2 * w2], [1, w2 / q, w2 * w2]),  # low-pass Hl
        ([w4 * w4 / w3, w4 * w4], [1, w4 / q4, w4 * w4]),  # transition Ht
        ([1, w5 / q5, w5 * w5], [1, w6 / q6, w6 * w6]),  # upward step Hs
    ]
    zs, ps, k = [], [], 1.0
    for num, den in sections:
        z, p, kk = signal.tf2zpk(num, den)
        zs.extend(z)
        ps.extend(p)
        k *= kk
    zd, pd, kd = signal.bilinear_zpk(np.array(zs), np.array(ps), k, fs)
    return signal.zpk2sos(zd, pd, kd)


def iso2631(a, fs, sos):
    aw_t = signal.sosfilt(sos, a)
    w2 = aw_t * aw_t
    n = len(a)
    aw = np.sqrt(w2.mean())
    vdv = (np.sum(w2 * w2) / fs) ** 0.25
    win = int(round(fs * 1.0))  # 1 s running r.m.s. (linear form)
    c = np.concatenate(([0.0], np.cumsum(w2)))
    mtvv = np.sqrt(np.max(c[win:] - c[:-win]) / win) if n >= win else aw
    peak = np.max(np.abs(aw_t))
    return dict(
        accel_rms=float(np.sqrt(np.mean(a * a))),
        aw=float(aw),
        vdv=float(vdv),
        mtvv=float(mtvv),
        crest_factor=float(peak / aw) if aw > 0 else 0.0,
    )


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--vehicle", required=True)
    ap.add_argument("--profile", required=True)
    ap.add_argument("--speed", type=float, required=True)
    ap.add_argument("--rate", type=float, default=1000.0)
    ap.add_argument("--out")
    args = ap.parse_args()

    mass, inertia, axles, seats = read_vehicle(args.vehicle)
    M, C, K, Kr, Cr, wheel, n = model(mass, inertia, axles)
    Minv = np.diag(1 / np.diag(M))
    A = np.block([[np.zeros((n, n)), np.eye(n)], [-Minv @ K, -Minv @ C]])
    B = np.vstack([np.zeros((n, 4)), np.hstack([Minv @ Kr, Minv @ Cr])])

    xs, zs = read_profile(args.profile)
    x0, spacing = xs[0], (xs[-1] - xs[0]) / (len(xs) - 1)
    v, fs = args.speed, args.rate
    duration = (xs[-1] - xs[0]) / v
    steps = int(np.floor(duration * fs * (1 + 1e-12))) + 1
    t = np.arange(steps) / fs
    wheelbase = axles[0]["x"] - axles[1]["x"]
    xf = x0 + v * t
    road, rate = [], []
    dz = np.diff(zs) / spacing
    for x in (xf, xf - wheelbase):
        road.append(np.interp(x, xs, zs) - zs[0])  # held at the ends
        seg = np.clip(((x - x0) / spacing).astype(np.int64), 0, len(zs) - 2)
        on = (x >= x0) & (x < xs[-1])
        rate.append(np.where(on, dz[seg], 0.0) * v)
    U = np.column_stack(road + rate)

    # Outputs: body accelerations (rows n.. of A x + B u), then travel and
    # tyre load per axle.
    acc_C, acc_D = A[n:], B[n:]
    rows_C, rows_D, names = [], [], []
    for name, x in seats:
        rows_C.append(acc_C[0] + x * acc_C[1])
        rows_D.append(acc_D[0] + x * acc_D[1])
        names.append(("seat", name))
    for j, what in ((0, "heave_acc"), (1, "pitch_acc")):
        rows_C.append(acc_C[j])
        rows_D.append(acc_D[j])
        names.append(("body", what))
    for i, a in enumerate(axles):
        cz, dz_ = np.zeros(2 * n), np.zeros(4)
        cz[0], cz[1] = -1.0, -a["x"]
        w = wheel[i]
        if w is not None:
            cz[w] = 1.0
        else:
            dz_[i] = 1.0
        rows_C.append(cz)
        rows_D.append(dz_)
        names.append(("travel", i))
        cl, dl = np.zeros(2 * n), np.zeros(4)
        if w is not None:  # tyre force kt (r - z_w) + ct (r' - z_w')
            cl[w], cl[n + w] = -a["kt"], -a["ct"]
            dl[i], dl[2 + i] = a["kt"], a["ct"]
        else:  # suspension force on the road
            cl = a["k"] * cz
            cl[n], cl[n + 1] = -a["c"], -a["c"] * a["x"]
            dl[i], dl[2 + i] = a["k"], a["c"]
        rows_C.append(cl)
        rows_D.append(dl)
        names.append(("load", i))
    Cm, Dm = np.array(rows_C), np.array(rows_D)

    _, y, _ = signal.lsim((A, B, Cm, Dm), U=U, T=t, X0=np.zeros(2 * n))
    y = np.atleast_2d(y.T).T

    sos = wk_sos(fs)
    rms = lambda s: float(np.sqrt(np.mean(s * s)))
    out = dict(speed_m_s=v, duration_s=duration, samples=steps, seats=[], axles={}, body={})
    for j, (kind, what) in enumerate(names):
        col = y[:, j]
        if kind == "seat":
            out["seats"].append(dict(name=what, x_m=dict(seats)[what], **iso2631(col, fs, sos)))
        elif kind == "body":
            out["body"][what.replace("_acc", "_accel_rms")] = rms(col)
        else:
            axle = out["axles"].setdefault(("front", "rear")[what], {})
            axle["travel_rms" if kind == "travel" else "tyre_load_rms"] = rms(col)
    text = json.dumps(out)
    if args.out:
        with open(args.out, "w") as f:
            f.write(text + "\n")
    else:
        print(text)


if __name__ == "__main__":
    main()
