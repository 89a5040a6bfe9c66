"""Reference runs of the half-car element model with scipy.integrate.solve_ivp
and event location at every switch of the piecewise-linear model.

The model (vehicle TOML and profile CSV read here, not taken from
roughride) is the one of half_car_ivp.py, whose Model class and summary are
reused. Where that script integrates straight across the kinks of the
model, this one stops the integration at each of them: solve_ivp's event
location (a root of each switching function on the dense output, found to
machine precision by scipy's Brent solver) ends the integration there, and
it restarts from the located state. Switching functions per axle: travel
rate (when bump and rebound rates differ), travel minus the bump clearance,
travel plus the rebound clearance, and the contact force margin (tyre
force + static load, or suspension force + static load without a tyre).
The road is linear between samples, so integration also restarts each time
an axle passes a road sample (as in half_car_ivp.py).

After an event the function that fired (and any function exactly at zero
where an integration starts, as at rest) is left unwatched for MUTE_S, so
a restart on the surface cannot fire again at its own start; at most
MAX_EVENTS restarts per road segment are taken (more is reported as an
error, never looped on).

Input (JSON on stdin): {"runs": [{"vehicle": path, "profile": path,
"speed_m_s": v, "rate_hz": f}], "rtol": r, "atol": a, "method": "DOP853"}.
Output (JSON on stdout): {"runs": [{...r.m.s., extremes, "events": n,
"seconds": wall time of the integration...}]}.
"""
import json
import math
import os
import sys
import time

import numpy as np
from scipy.integrate import solve_ivp

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from half_car_ivp import Model, breakpoints, read_profile, read_vehicle, summarise  # noqa: E402

MAX_EVENTS = 200
# Time a switching function at zero is left unwatched after a restart, s:
# a kink missed over it moves the state by O(MUTE_S²).
MUTE_S = 1e-7


def switching(model, t, y):
    """The switching functions at (t, y), in a fixed order."""
    xf = model.x0 + model.v * t
    g = []
    for i in (0, 1):
        (x, k, cb, cr, mu, kt, ct, bc, rc, ks, w) = model.par[i]
        r, rd, zl, vl, d, dd = model.axle_kinematics(i, xf, y)
        if cb != cr:
            g.append(dd)
        fs = k * d + (cb if dd >= 0 else cr) * dd
        if bc is not None:
            g.append(d - bc)
            if d > bc:
                fs += ks * (d - bc)
        if rc is not None:
            g.append(d + rc)
            if d < -rc and not (bc is not None and d > bc):
                fs += ks * (d + rc)
        if w is not None:
            g.append(kt * (r - zl) + ct * (rd - vl) + model.static_c[i])
        else:
            g.append(fs + model.static_s[i])
    return g


def make_events(model, watched):
    events = []
    for j in watched:
        def ev(t, y, j=j):
            return switching(model, t, y)[j]
        ev.terminal = True
        events.append(ev)
    return events


def run(spec, rtol, atol, method):
    model = Model(read_vehicle(spec["vehicle"]), read_profile(spec["profile"]), spec["speed_m_s"])
    rate = spec["rate_hz"]
    duration = (model.x[-1] - model.x[0]) / model.v
    count = int(math.floor(duration * rate * (1 + 1e-12))) + 1
    t_grid = np.arange(count) / rate
    y = np.zeros(2 * model.n)
    states = np.zeros((count, 2 * model.n))
    filled = 1
    t0 = 0.0
    events_total = 0
    started = time.perf_counter()
    for t1 in breakpoints(model, max(duration, t_grid[-1])):
        if t1 <= t0:
            continue
        model.set_pieces(0.5 * (t0 + t1))
        n_sw = len(switching(model, t0, y.tolist()))
        # Functions at zero where an integration starts (at rest, or just
        # fired) are not watched for the first MUTE_S, so a restart on the
        # surface cannot fire again at its own start.
        muted = {j for j, g in enumerate(switching(model, t0, y.tolist())) if g == 0.0}
        for _ in range(MAX_EVENTS):
            t_stop = min(t0 + MUTE_S, t1) if muted else t1
            watched = [j for j in range(n_sw) if j not in muted]
            sol = solve_ivp(model.rhs, (t0, t_stop), y, method=method, rtol=rtol, atol=atol,
                            dense_output=True, events=make_events(model, watched))
            if sol.status < 0:
                raise RuntimeError(f"solve_ivp failed at t = {sol.t[-1]}: {sol.message}")
            t_end = sol.t[-1]
            hi = np.searchsorted(t_grid, t_end, side="right")
            if hi > filled:
                states[filled:hi] = sol.sol(t_grid[filled:hi]).T
                filled = hi
            y = sol.y[:, -1]
            t0 = t_end
            if sol.status == 1:
                events_total += 1
                muted = {watched[k] for k, te in enumerate(sol.t_events) if len(te)}
            else:
                muted = set()
                if t_end >= t1:
                    break
        else:
            raise RuntimeError(f"more than {MAX_EVENTS} events in one road segment near t = {t0}")
        t0 = t1
    seconds = time.perf_counter() - started
    assert filled == count, (filled, count)
    out = summarise(model, t_grid, states)
    out["events"] = events_total
    out["seconds"] = seconds
    return out


def main():
    data = json.load(sys.stdin)
    rtol = data.get("rtol", 1e-10)
    atol = data.get("atol", 1e-12)
    method = data.get("method", "DOP853")
    json.dump({"runs": [run(s, rtol, atol, method) for s in data["runs"]]}, sys.stdout)


if __name__ == "__main__":
    main()
