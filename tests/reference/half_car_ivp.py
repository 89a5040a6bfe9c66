"""Reference time-domain runs of the half-car element model with scipy.

An independent implementation of the model documented in the README
("The model"): heave z (up), pitch θ (nose up), one unsprung mass per axle
when the vehicle file gives `unsprung_mass`; suspension spring, damper
(`damping`, or `damping_bump` / `damping_rebound` by the sign of the travel
rate), bump/rebound stops (a spring of `stop_rate` past the clearance) and
a tyre (`tyre_rate`, `tyre_damping`) that cannot pull on the road (the
total contact force is clamped at zero: lift-off). Travel is compression
positive: wheel (or road) displacement minus body-point displacement.
Static equilibrium at the first profile sample; the rear axle sees the
first sample until it reaches the profile; the road is linear between
samples and held flat beyond the last one.

The vehicle file (TOML) and the profile (CSV) are read here, not taken
from roughride. Integration: scipy.integrate's DOP853 (Hairer's explicit
Runge–Kutta 8(5,3) with dense output) at rtol 1e-10, one integration per
interval between the instants at which either axle passes a profile sample,
so that the piecewise-linear road is smooth inside every integration.

Input (JSON on stdin): {"runs": [{"vehicle": path, "profile": path,
"speed_m_s": v, "rate_hz": f}], "rtol": r, "atol": a}.
Output (JSON on stdout): {"runs": [{...r.m.s. and extremes...}]}.
"""
import csv
import json
import math
import sys
import tomllib

import numpy as np
from scipy.integrate import DOP853

G = 9.80665  # m/s², standard gravity (CGPM 1901)


def read_vehicle(path):
    with open(path, "rb") as f:
        doc = tomllib.load(f)
    body = doc["body"]
    axles = []
    for name, sign in (("front", 1.0), ("rear", -1.0)):
        a = doc[name]
        c = a.get("damping")
        bump = a.get("damping_bump", c)
        rebound = a.get("damping_rebound", c)
        mu = a.get("unsprung_mass", 0.0) or 0.0
        axles.append(
            {
                "x": sign * a["cg_distance"],
                "k": a["spring_rate"],
                "c_bump": bump,
                "c_rebound": rebound,
                "mu": mu,
                "kt": a.get("tyre_rate", 0.0),
                "ct": a.get("tyre_damping", 0.0),
                "bump_clearance": a.get("bump_clearance"),
                "rebound_clearance": a.get("rebound_clearance"),
                "stop_rate": a.get("stop_rate", 0.0),
            }
        )
    seats = [s["x"] for s in doc["seat"]]
    return body["mass"], body["pitch_inertia"], axles, seats


def read_profile(path):
    with open(path, newline="") as f:
        rows = list(csv.DictReader(f))
    x = np.array([float(r["distance_m"]) for r in rows])
    z = np.array([float(r["elevation_m"]) for r in rows])
    return x, z


class Model:
    def __init__(self, vehicle, profile, speed):
        self.m, self.i, self.axles, self.seats = vehicle
        self.x, self.z = profile
        self.v = speed
        self.ds = (self.x[-1] - self.x[0]) / (len(self.x) - 1)
        self.wheelbase = self.axles[0]["x"] - self.axles[1]["x"]
        length = self.axles[0]["x"] - self.axles[1]["x"]
        w = self.m * G
        # Static loads by moment balance about the CG.
        self.static_s = [w * -self.axles[1]["x"] / length, w * self.axles[0]["x"] / length]
        self.static_c = [
            s + a["mu"] * G for s, a in zip(self.static_s, self.axles)
        ]
        self.wheel = []
        n = 2
        for a in self.axles:
            if a["mu"] > 0:
                self.wheel.append(n)
                n += 1
            else:
                self.wheel.append(None)
        self.n = n
        self.pieces = [None, None]
        self.x0 = float(self.x[0])
        self.offset = (0.0, self.wheelbase)
        self.par = [
            (a["x"], a["k"], a["c_bump"], a["c_rebound"], a["mu"], a["kt"], a["ct"],
             a["bump_clearance"], a["rebound_clearance"], a["stop_rate"], w)
            for a, w in zip(self.axles, self.wheel)
        ]

    def set_pieces(self, t_mid):
        """The linear road piece under each axle for the interval holding t_mid."""
        for i, offset in enumerate((0.0, self.wheelbase)):
            u = (self.x[0] + self.v * t_mid - offset - self.x[0]) / self.ds
            k = math.floor(u)
            last = len(self.x) - 1
            z0 = self.z[0]
            if k < 0:
                self.pieces[i] = (self.x0, 0.0, 0.0)
            elif k >= last:
                self.pieces[i] = (float(self.x[-1]), float(self.z[-1] - z0), 0.0)
            else:
                slope = float((self.z[k + 1] - self.z[k]) / self.ds)
                self.pieces[i] = (float(self.x[k]), float(self.z[k] - z0), slope)

    def axle_kinematics(self, i, xf, y):
        """Road under axle i (elevation, rate), the lower end of its
        suspension (wheel, or the road without one: elevation, rate), and
        its travel and travel rate, with the front axle at xf."""
        n = self.n
        (x, _k, _cb, _cr, _mu, _kt, _ct, _bc, _rc, _ks, w) = self.par[i]
        px, pz, ps = self.pieces[i]
        r = pz + ps * (xf - self.offset[i] - px)
        rd = ps * self.v
        zb = y[0] + x * y[1]
        vb = y[n] + x * y[n + 1]
        if w is None:
            zl, vl = r, rd
        else:
            zl, vl = y[w], y[n + w]
        return r, rd, zl, vl, zl - zb, vl - vb

    def forces(self, t, y):
        """Accelerations and element outputs at (t, y) (y a list)."""
        n = self.n
        xf = self.x0 + self.v * t
        fb = 0.0
        mb = 0.0
        qdd = [0.0] * n
        travel, contact, touching = [0.0, 0.0], [0.0, 0.0], [True, True]
        for i in (0, 1):
            (x, k, cb, cr, mu, kt, ct, bc, rc, ks, w) = self.par[i]
            r, rd, zl, vl, d, dd = self.axle_kinematics(i, xf, y)
            fs = k * d + (cb if dd >= 0 else cr) * dd
            if bc is not None and d > bc:
                fs += ks * (d - bc)
            elif rc is not None and d < -rc:
                fs += ks * (d + rc)
            on = True
            if w is not None:
                ft = kt * (r - zl) + ct * (rd - vl)
                if ft + self.static_c[i] < 0:
                    ft = -self.static_c[i]
                    on = False
                qdd[w] = (ft - fs) / mu
                contact[i] = ft
            else:
                if fs + self.static_s[i] < 0:
                    fs = -self.static_s[i]
                    on = False
                contact[i] = fs
            travel[i] = d
            touching[i] = on
            fb += fs
            mb += x * fs
        qdd[0] = fb / self.m
        qdd[1] = mb / self.i
        return qdd, travel, contact, touching

    def rhs(self, t, y):
        n = self.n
        yl = y.tolist()
        return np.array(yl[n:] + self.forces(t, yl)[0])


def breakpoints(model, duration):
    """Instants at which either axle passes a profile sample, and the end."""
    segs = len(model.x) - 1
    front = np.arange(1, segs + 1) * model.ds / model.v
    rear = (model.wheelbase + np.arange(0, segs + 1) * model.ds) / model.v
    pts = np.union1d(front, rear)
    pts = pts[(pts > 0) & (pts < duration * (1 - 1e-12))]
    # Front and rear sample passings that coincide up to rounding (a
    # wheelbase that is a multiple of the spacing) are one instant.
    keep = np.append(True, np.diff(pts) > 1e-9 * duration)
    return np.append(pts[keep], duration)


def run(spec, rtol, atol):
    model = Model(read_vehicle(spec["vehicle"]), read_profile(spec["profile"]), spec["speed_m_s"])
    rate = spec["rate_hz"]
    duration = (model.x[-1] - model.x[0]) / model.v
    count = int(math.floor(duration * rate * (1 + 1e-12))) + 1
    t_grid = np.arange(count) / rate
    t_end = t_grid[-1]
    y = np.zeros(2 * model.n)
    states = np.zeros((count, 2 * model.n))
    filled = 1
    t0 = 0.0
    h = None
    steps = 0
    for t1 in breakpoints(model, max(duration, t_end)):
        if t1 <= t0:
            continue
        model.set_pieces(0.5 * (t0 + t1))
        solver = DOP853(model.rhs, t0, y, t1, rtol=rtol, atol=atol,
                        first_step=min(h, t1 - t0) if h else None)
        while solver.status == "running":
            solver.step()
            steps += 1
            if solver.status == "failed":
                raise RuntimeError(f"DOP853 failed at t = {solver.t}")
            hi = np.searchsorted(t_grid, solver.t, side="right")
            if hi > filled:
                dense = solver.dense_output()
                states[filled:hi] = dense(t_grid[filled:hi]).T
                filled = hi
            # The controller's proposal after a step it chose freely (a step
            # cut short to end on the interval's end would shrink it).
            if solver.status == "running":
                h = solver.h_abs
        y = solver.y
        t0 = t1
    assert filled == count, (filled, count)
    out = summarise(model, t_grid, states)
    out["steps"] = steps
    return out


def summarise(model, t_grid, states):
    seat_acc = [[] for _ in model.seats]
    heave_acc, pitch_acc = [], []
    travel = [[], []]
    contact = [[], []]
    off = [0, 0]
    ds = model.ds
    for t, y in zip(t_grid.tolist(), states.tolist()):
        # The piece the output instant lies on (to its right at a sample point).
        model.set_pieces(t + 1e-9 * ds / model.v)
        qdd, d, c, on = model.forces(t, y)
        for j, x in enumerate(model.seats):
            seat_acc[j].append(qdd[0] + x * qdd[1])
        heave_acc.append(qdd[0])
        pitch_acc.append(qdd[1])
        for i in range(2):
            travel[i].append(d[i])
            contact[i].append(c[i])
            off[i] += 0 if on[i] else 1

    def rms(v):
        v = np.asarray(v)
        return float(np.sqrt(np.mean(v * v)))

    out = {
        "samples": len(t_grid),
        "seat_accel_rms": [rms(s) for s in seat_acc],
        "heave_accel_rms": rms(heave_acc),
        "pitch_accel_rms": rms(pitch_acc),
        "heave_rms": rms(states[:, 0]),
        "pitch_rms": rms(states[:, 1]),
        "axles": [],
    }
    for i in range(2):
        out["axles"].append(
            {
                "travel_rms": rms(travel[i]),
                "travel_min": float(np.min(travel[i])),
                "travel_max": float(np.max(travel[i])),
                "tyre_load_rms": rms(contact[i]),
                "tyre_load_min": float(np.min(contact[i])),
                "tyre_load_max": float(np.max(contact[i])),
                "time_off_ground_fraction": off[i] / len(t_grid),
            }
        )
    return out


def main():
    data = json.load(sys.stdin)
    rtol = data.get("rtol", 1e-10)
    atol = data.get("atol", 1e-12)
    json.dump({"runs": [run(s, rtol, atol) for s in data["runs"]]}, sys.stdout)


if __name__ == "__main__":
    main()
