"""Reference run of a linear state-space model with scipy.signal.lsim.

Input (JSON on stdin): A, B, C, D (row lists), t (s), u (rows of inputs
per time). Output (JSON on stdout): y (rows of outputs per time).
lsim holds the input linear between samples (first-order hold).
"""
import json
import sys

import numpy as np
from scipy import signal

data = json.load(sys.stdin)
A = np.array(data["A"], dtype=float)
B = np.array(data["B"], dtype=float)
C = np.array(data["C"], dtype=float)
D = np.array(data["D"], dtype=float)
t = np.array(data["t"], dtype=float)
u = np.array(data["u"], dtype=float)
_, y, _ = signal.lsim((A, B, C, D), U=u, T=t, X0=np.zeros(A.shape[0]))
y = np.atleast_2d(y.T).T
json.dump({"y": y.tolist()}, sys.stdout)
