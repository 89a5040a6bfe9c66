"""Reference Welch PSD of a road profile with scipy.signal.welch.

Input (JSON on stdin): elevation_m (list), spacing_m, nperseg.
Output (JSON on stdout): frequency_cycle_m, gd_m3 (one-sided density,
m^3 = m^2 per cycle/m), with a periodic Hann window, 50 % overlap and a
linear detrend per segment.
"""
import json
import sys

import numpy as np
from scipy import signal

data = json.load(sys.stdin)
z = np.asarray(data["elevation_m"], dtype=float)
n = int(data["nperseg"])
f, pxx = signal.welch(
    z,
    fs=1.0 / float(data["spacing_m"]),
    window="hann",
    nperseg=n,
    noverlap=n // 2,
    detrend="linear",
    return_onesided=True,
    scaling="density",
    average="mean",
)
json.dump({"frequency_cycle_m": f.tolist(), "gd_m3": pxx.tolist()}, sys.stdout)
