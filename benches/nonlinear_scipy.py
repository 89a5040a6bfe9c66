"""The scripted baseline that benches/compare_nonlinear.sh times against
`roughride simulate --solver piecewise` on a vehicle with bump and rebound
stops, asymmetric dampers and tyre lift-off.

What a ride engineer would write by hand with numpy and scipy for the
piecewise-linear half car: scipy.integrate.solve_ivp (DOP853) stopped at
every switch of the model by its event location, restarted from the
located state. The model and the integration loop are those of the test
reference tests/reference/half_car_events.py (imported, not copied), which
builds the element model from the vehicle TOML and the profile CSV itself;
see that file and tests/reference/half_car_ivp.py for the equations and
their sources.

Usage: nonlinear_scipy.py --vehicle V.toml --profile P.csv --speed 20
       [--rate 1000] [--rtol 1e-10] [--atol 1e-12]
Prints one JSON object: the reference's summary (r.m.s. values, extremes,
events, "seconds" of integration) plus the run's settings.
"""

import argparse
import json
import os
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "tests", "reference"))
import half_car_events  # noqa: E402


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--vehicle", required=True)
    ap.add_argument("--profile", required=True)
    ap.add_argument("--speed", type=float, required=True)
    ap.add_argument("--rate", type=float, default=1000.0)
    ap.add_argument("--rtol", type=float, default=1e-10)
    ap.add_argument("--atol", type=float, default=1e-12)
    ap.add_argument("--method", default="DOP853")
    args = ap.parse_args()
    spec = {
        "vehicle": args.vehicle,
        "profile": args.profile,
        "speed_m_s": args.speed,
        "rate_hz": args.rate,
    }
    out = half_car_events.run(spec, args.rtol, args.atol, args.method)
    out.update(rtol=args.rtol, atol=args.atol, method=args.method)
    print(json.dumps(out))


if __name__ == "__main__":
    main()
