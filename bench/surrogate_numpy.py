"""The surrogate's numerical work in NumPy, for timing beside bench/surrogate.ts.

Usage: python3 bench/surrogate_numpy.py TERMS PRUNED_TERMS
Prints one JSON line: fitMs (QR of a 1300 x TERMS design and solve for 1250 right-hand sides), evalMs (one
full map: features times the TERMS x 1250 coefficient matrix), prunedEvalMs, batchMapsPerSecond
(5000 maps as one product), threads as OpenBLAS sets them. Random numbers: only the timing matters here.
"""
import json
import sys
import time

import numpy as np


def best_ms(repeats, work):
    best = float("inf")
    for _ in range(repeats):
        start = time.perf_counter()
        work()
        best = min(best, (time.perf_counter() - start) * 1e3)
    return best


def main():
    terms = int(sys.argv[1])
    pruned_terms = int(sys.argv[2])
    outputs = 2 * 25 * 25
    rng = np.random.default_rng(1)
    design = rng.normal(size=(1300, terms))
    maps = rng.normal(size=(1300, outputs))

    def fit():
        q, r = np.linalg.qr(design)
        np.linalg.solve(r, q.T @ maps)

    fit_ms = best_ms(5, fit)
    coefficients = rng.normal(size=(terms, outputs))
    features = rng.normal(size=terms)
    # Per-call timing of many calls (one call is too short for the clock).
    calls = 2000
    eval_ms = best_ms(5, lambda: [features @ coefficients for _ in range(calls)]) / calls
    pruned = coefficients[:pruned_terms].copy()
    pruned_features = features[:pruned_terms].copy()
    pruned_ms = best_ms(5, lambda: [pruned_features @ pruned for _ in range(calls)]) / calls
    batch = rng.normal(size=(5000, terms))
    batch_ms = best_ms(5, lambda: batch @ coefficients)
    print(json.dumps({
        "numpyVersion": np.__version__,
        "fitMs": fit_ms,
        "evalMs": eval_ms,
        "prunedEvalMs": pruned_ms,
        "batchMapsPerSecond": 5000 / (batch_ms / 1e3),
    }))


if __name__ == "__main__":
    main()
