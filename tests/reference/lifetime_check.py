"""Reference life spectra for roughride's lifetime tests, counted
independently of roughride from the time histories it wrote.

Reads one JSON object on stdin:
  {"cases": [{"history": PATH, "factor": F}, ...],
   "columns": [{"name": COLUMN, "bin": W}, ...],
   "exponents": [m, ...], "reference_cycles": N_ref,
   "residue": "half" | "repeat"}
where F = (the case's distance in the life) / (its simulated length).

For every column, over all cases: rainflow cycles by rainflow.extract_cycles
(PyPI `rainflow`, ASTM E1049-85 5.4.4: the residue as half cycles). With
"repeat" each history is taken as a block that repeats: its turning points
(rainflow.reversals) are rearranged to start and end at the point of
largest magnitude and counted again (ASTM E1049-85 5.4.5, repeating
histories), which gives one repetition's cycles. Each case's cycles are
scaled by F and summed:
  damage_equivalent_range[m] = (sum F * n * S**m / N_ref) ** (1/m)
(Palmgren-Miner with a Basquin curve, common practice), computed with numpy;
the range-mean matrix (cells floor(range/W), floor(mean/W)); and the
level up-crossings of every level k*W (x[i-1] < k*W <= x[i], on the bins
floor(x/W)). Prints {COLUMN: {"damage_equivalent_range": [...],
"cycles": total, "cells": [[kr, km, n], ...], "crossings": [[k, n], ...]}}.
"""
import csv
import json
import sys
from collections import defaultdict

import numpy as np
import rainflow


def read_columns(path, names):
    with open(path, newline="") as f:
        rows = csv.DictReader(f)
        data = {n: [] for n in names}
        for row in rows:
            for n in names:
                data[n].append(float(row[n]))
    return {n: np.array(v) for n, v in data.items()}


def cycles_of(series, residue):
    if residue == "half":
        return [(r, m, n) for r, m, n, _, _ in rainflow.extract_cycles(series)]
    points = [x for _, x in rainflow.reversals(series)]
    start = int(np.argmax(np.abs(points)))
    rotated = points[start:] + points[:start] + [points[start]]
    return [(r, m, n) for r, m, n, _, _ in rainflow.extract_cycles(rotated)]


def main():
    job = json.load(sys.stdin)
    names = [c["name"] for c in job["columns"]]
    bins = {c["name"]: c["bin"] for c in job["columns"]}
    exps = np.array(job["exponents"], dtype=float)
    damage = {n: np.zeros(len(exps)) for n in names}
    total = {n: 0.0 for n in names}
    cells = {n: defaultdict(float) for n in names}
    crossings = {n: defaultdict(float) for n in names}
    for case in job["cases"]:
        f = case["factor"]
        data = read_columns(case["history"], names)
        for n in names:
            x = data[n]
            w = bins[n]
            cyc = np.array(cycles_of(x.tolist(), job["residue"]))
            ranges, means, counts = cyc[:, 0], cyc[:, 1], cyc[:, 2]
            damage[n] += f * np.array([np.sum(counts * ranges ** m) for m in exps])
            total[n] += f * np.sum(counts)
            for kr, km, c in zip(np.floor(ranges / w), np.floor(means / w), counts):
                cells[n][(int(kr), int(km))] += f * c
            j = np.floor(x / w).astype(np.int64)
            for a, b in zip(j[:-1], j[1:]):
                for k in range(a + 1, b + 1):
                    crossings[n][int(k)] += f
    out = {}
    for n in names:
        deq = (damage[n] / job["reference_cycles"]) ** (1.0 / exps)
        out[n] = {
            "damage_equivalent_range": deq.tolist(),
            "cycles": total[n],
            "cells": [[k[0], k[1], v] for k, v in sorted(cells[n].items())],
            "crossings": [[k, v] for k, v in sorted(crossings[n].items())],
        }
    print(json.dumps(out))


main()
