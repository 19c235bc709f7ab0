"""NumPy side of bench/analysis.ts: numpy.linalg.eigh on the stack of B matrices and numpy.linalg.svd of L, best of 3.
Usage: python3 bench/analysis_numpy.py DIR (holding b.npy and l.npy) -> one JSON line."""
import json
import sys
import time

import numpy as np

d = sys.argv[1]
b = np.load(f"{d}/b.npy")
l = np.load(f"{d}/l.npy")


def best(f):
    t = float("inf")
    for _ in range(3):
        s = time.perf_counter()
        f()
        t = min(t, time.perf_counter() - s)
    return 1e3 * t


print(json.dumps({"eighMs": best(lambda: np.linalg.eigh(b)), "svdMs": best(lambda: np.linalg.svd(l, full_matrices=False))}))
