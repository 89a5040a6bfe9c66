"""Reference values for roughride's stats tests.

Reads one JSON object on stdin: {"series": [...], "m": S-N exponent,
"n_eq": equivalent cycle count, "percentiles": [p, ...]} and prints one JSON
object: the cycles of rainflow.extract_cycles (PyPI `rainflow`, ASTM E1049-85
5.4.4) as [range, mean, count, i_start, i_end], their damage-equivalent range
(sum n*S^m / n_eq)^(1/m) computed with numpy, and numpy.percentile (linear).
"""
import json
import sys

import numpy as np
import rainflow

data = json.load(sys.stdin)
series = data["series"]
cycles = [list(map(float, c)) for c in rainflow.extract_cycles(series)]
m = float(data["m"])
n_eq = float(data["n_eq"])
if cycles:
    arr = np.array(cycles)
    deq = float((np.sum(arr[:, 2] * arr[:, 0] ** m) / n_eq) ** (1.0 / m))
else:
    deq = 0.0
pct = [float(np.percentile(series, p)) for p in data.get("percentiles", [])]
print(json.dumps({"cycles": cycles, "damage_equivalent_range": deq, "percentiles": pct}))
