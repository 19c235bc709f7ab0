"""Exact TTL maps with NumPy, the same sums as lib/optics (PHYSICS.md sections 1-3), for timing beside it.

Usage: python3 bench/optics_numpy.py MAPS   -> prints one JSON line {"msPerMap": ..., "maps": ...}
Plain matrix products (E = K U K^T with BLAS), no symmetry folding: the straightforward NumPy way.
"""
import json
import math
import sys
import time

import numpy as np

WAVELENGTH = 1064e-9
RADIUS = 0.13
BEAM = 0.115
DISTANCE = 2.2e9
HALF_ANGLE = 60e-9
NODES = 25
SAMPLES = 128


def noll_orders(j):
    n = 0
    while (n + 1) * (n + 2) // 2 < j:
        n += 1
    p = j - n * (n + 1) // 2
    m = 2 * (p // 2) if n % 2 == 0 else 2 * ((p - 1) // 2) + 1
    if m == 0:
        return n, 0
    return n, (m if j % 2 == 0 else -m)


def zernike(j, rho, phi):
    n, m = noll_orders(j)
    ma = abs(m)
    radial = np.zeros_like(rho)
    for s in range((n - ma) // 2 + 1):
        c = (-1) ** s * math.factorial(n - s) / (
            math.factorial(s) * math.factorial((n + ma) // 2 - s) * math.factorial((n - ma) // 2 - s))
        radial += c * rho ** (n - 2 * s)
    if m == 0:
        return math.sqrt(n + 1) * radial
    trig = np.cos(m * phi) if m > 0 else np.sin(ma * phi)
    return math.sqrt(2 * (n + 1)) * radial * trig


def main():
    maps = int(sys.argv[1]) if len(sys.argv) > 1 else 200
    k = 2 * np.pi / WAVELENGTH
    x = (np.arange(SAMPLES) + 0.5 - SAMPLES / 2) * (2 * RADIUS / SAMPLES)
    xx, yy = np.meshgrid(x, x)
    r2 = xx ** 2 + yy ** 2
    # Area-weighted edge by 16 x 16 supersampling (timing only; the exact-area edge is in lib/optics).
    sub = (np.arange(16) + 0.5) / 16 - 0.5
    cell = 2 * RADIUS / SAMPLES
    t = np.zeros_like(xx)
    for dy in sub:
        for dx in sub:
            t += ((xx + dx * cell) ** 2 + (yy + dy * cell) ** 2 <= RADIUS ** 2)
    t /= 256
    amp = t * np.exp(-r2 / BEAM ** 2) * np.exp(1j * k * r2 / (2 * DISTANCE))
    rho = np.sqrt(r2) / RADIUS
    phi = np.arctan2(yy, xx)
    basis = np.stack([zernike(j, rho, phi) for j in range(4, 37)]) * 1e-9 * k
    theta = np.linspace(-HALF_ANGLE, HALF_ANGLE, NODES)
    kern = np.exp(-1j * k * np.outer(theta, x))
    kern_x = kern * x[None, :]
    rng = np.random.default_rng(7)
    coefficients = rng.normal(size=(maps, 33))
    coefficients *= 20 / np.linalg.norm(coefficients, axis=1, keepdims=True)

    def one(a):
        u = amp * np.exp(1j * np.tensordot(a, basis, axes=1))
        g = u @ kern.T
        gx = u @ kern_x.T
        e = kern @ g
        ex = kern @ gx
        ey = kern_x @ g
        inten = np.abs(e) ** 2
        cx = -np.real(np.conj(e) * ex) / inten * 1e3
        cy = -np.real(np.conj(e) * ey) / inten * 1e3
        return cx, cy

    for a in coefficients[:20]:
        one(a)
    best = math.inf
    for _ in range(3):
        start = time.perf_counter()
        for a in coefficients:
            one(a)
        best = min(best, (time.perf_counter() - start) / maps)
    print(json.dumps({"msPerMap": best * 1e3, "maps": maps}))


if __name__ == "__main__":
    main()
