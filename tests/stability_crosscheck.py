#!/usr/bin/env python3
"""Checks `lamella stability` against an independent solver of the same linear problem.

Usage: python tests/stability_crosscheck.py PATH/TO/lamella

The two-layer channel problem (plane Poiseuille flow of two liquids of equal density between
fixed walls, interface conditions of Yih 1967, J. Fluid Mech. 27, §2) is solved here a second
time, written from the equations and not from Lamella's code: Chebyshev collocation on each
layer with the differentiation matrix of Trefethen 2000 (Spectral Methods in MATLAB, SIAM,
program cheb.m; recalled from memory), the Orr-Sommerfeld equation at the interior nodes,
wall and interface conditions in place of the two end rows of each layer, and the
generalised eigenproblem A x = c B x solved by scipy.linalg.eig (LAPACK). Lamella's solver
(crates/lamella-post/src/stability) uses integrated Chebyshev bases and its own eigen
iteration; agreement of the leading wave speed c to 5e-6 at several (m, n, Re, k h) means
neither carries a coding error that the other lacks. The parameter sets include those of
the bundled interface cases. Exits non-zero with a message on the first disagreement.
"""

import re
import subprocess
import sys

import numpy as np
import scipy.linalg as la

# (m = mu_lower/mu_upper, n = d_lower/d_upper, Re = rho U_max h / mu_lower, k h)
CASES = [
    (20.0, 1.0, 1.0, np.pi),  # cases/interface-growth.ron
    (10.0, 2.0, 5.0, np.pi),  # cases/interface-decay.ron
    (0.5, 2.0, 50.0, 1.5),
    (5.0, 0.5, 10.0, 0.8),
    (100.0, 3.0, 2.0, 2.0),
]
POINTS = 36  # collocation points per layer; c changes by < 1e-6 between 32 and 48
TOLERANCE = 5e-6


def cheb(n):
    """Chebyshev points x_j = cos(pi j/n) and the differentiation matrix (Trefethen 2000)."""
    x = np.cos(np.pi * np.arange(n + 1) / n)
    c = np.hstack([2.0, np.ones(n - 1), 2.0]) * (-1.0) ** np.arange(n + 1)
    dx = x[:, None] - x[None, :]
    d = np.outer(c, 1.0 / c) / (dx + np.eye(n + 1))
    return d - np.diag(d.sum(axis=1)), x


def base_flow(m, n):
    """Piecewise-parabolic steady profile on y in [-1, 1], scaled to a peak of 1.

    mu_j U_j'' = -G in each layer (lower mu = m, upper mu = 1), U = 0 at both walls, U and
    mu U' continuous at the interface y_i = -1 + 2n/(1 + n) (Bird, Stewart & Lightfoot,
    Transport Phenomena, §2.5).
    """
    yi = -1.0 + 2.0 * n / (1.0 + n)
    # U_1 = -y^2/(2m) + a1 y + b1, U_2 = -y^2/2 + a2 y + b2
    lhs = np.array(
        [[-1.0, 1.0, 0.0, 0.0], [0.0, 0.0, 1.0, 1.0], [yi, 1.0, -yi, -1.0], [m, 0.0, -1.0, 0.0]]
    )
    rhs = np.array([1.0 / (2.0 * m), 0.5, yi * yi / (2.0 * m) - yi * yi / 2.0, 0.0])
    a1, b1, a2, b2 = la.solve(lhs, rhs)
    layers = [(1.0 / m, a1, b1), (1.0, a2, b2)]
    ys = np.linspace(-1.0, 1.0, 200001)
    u = np.where(ys <= yi, -ys**2 / (2 * m) + a1 * ys + b1, -(ys**2) / 2 + a2 * ys + b2)
    scale = 1.0 / u.max()
    return yi, [(g * scale, a * scale, b * scale) for g, a, b in layers]


def leading_wave_speed(m, n, re_lower, alpha, points=POINTS):
    """The leading (largest Im c) wave speed of the two-layer problem in scaled units."""
    yi, layers = base_flow(m, n)
    mu = [m, 1.0]
    nu = [1.0 / re_lower, 1.0 / (m * re_lower)]
    d, x = cheb(points)
    eye = np.eye(points + 1)
    size = points + 1
    a = np.zeros((2 * size, 2 * size), complex)
    b = np.zeros((2 * size, 2 * size), complex)
    ops = []
    for j, (lo, hi) in enumerate([(-1.0, yi), (yi, 1.0)]):
        y = lo + (hi - lo) * (x + 1.0) / 2.0
        d1 = 2.0 / (hi - lo) * d
        d2 = d1 @ d1
        d3 = d2 @ d1
        d4 = d3 @ d1
        ops.append((d1, d2, d3))
        g, a_j, b_j = layers[j]
        u = -g * y**2 / 2.0 + a_j * y + b_j
        upp = -g
        lap = d2 - alpha**2 * eye
        # Orr-Sommerfeld: (U - c)(phi'' - a^2 phi) - U'' phi = nu/(i a) (phi'''' - 2a^2 phi'' + a^4 phi)
        s = slice(j * size, (j + 1) * size)
        a[s, s] = (
            np.diag(u) @ lap
            - upp * eye
            - nu[j] / (1j * alpha) * (d4 - 2 * alpha**2 * d2 + alpha**4 * eye)
        )
        b[s, s] = lap
    lower, upper = 0, size  # row offsets; node 0 is the top of a layer, node `points` its bottom
    top, bottom = 0, points
    rows = [
        lower + bottom, lower + bottom - 1, upper + top, upper + top + 1,
        lower + top, lower + top + 1, upper + bottom, upper + bottom - 1,
    ]
    a[rows, :] = 0.0
    b[rows, :] = 0.0
    unit = np.eye(size)
    (d1l, d2l, d3l), (d1u, d2u, d3u) = ops
    cols_l, cols_u = slice(lower, lower + size), slice(upper, upper + size)
    # No slip at the walls: phi = phi' = 0.
    a[lower + bottom, cols_l] = unit[bottom]
    a[lower + bottom - 1, cols_l] = d1l[bottom]
    a[upper + top, cols_u] = unit[top]
    a[upper + top + 1, cols_u] = d1u[top]
    # Interface (Yih 1967 §2), with eta = phi/(c - U_i) from the kinematic condition:
    g_l, a_l, b_l = layers[0]
    g_u, a_u, _ = layers[1]
    u_i = -g_l * yi**2 / 2.0 + a_l * yi + b_l
    jump_du = (-g_u * yi + a_u) - (-g_l * yi + a_l)
    # [phi] = 0
    a[lower + top, cols_l] = unit[top]
    a[lower + top, cols_u] = -unit[bottom]
    # [phi'] + eta [U'] = 0  ->  (c - U_i)[phi'] + phi [U'] = 0
    a[lower + top + 1, cols_l] = -u_i * d1l[top]
    a[lower + top + 1, cols_u] = u_i * d1u[bottom] - jump_du * unit[bottom]
    b[lower + top + 1, cols_l] = -d1l[top]
    b[lower + top + 1, cols_u] = d1u[bottom]
    # [mu (phi'' + a^2 phi)] = 0 (tangential stress)
    a[upper + bottom, cols_u] = mu[1] * (d2u[bottom] + alpha**2 * unit[bottom])
    a[upper + bottom, cols_l] = -mu[0] * (d2l[top] + alpha**2 * unit[top])
    # [mu (phi''' - 3 a^2 phi')] = 0 (normal stress; equal densities)
    a[upper + bottom - 1, cols_u] = mu[1] * (d3u[bottom] - 3 * alpha**2 * d1u[bottom])
    a[upper + bottom - 1, cols_l] = -mu[0] * (d3l[top] - 3 * alpha**2 * d1l[top])
    speeds = la.eig(a, b, right=False)
    speeds = speeds[np.isfinite(speeds) & (np.abs(speeds) < 10.0)]
    return speeds[np.argmax(speeds.imag)]


def lamella_wave_speed(binary, m, n, re_lower, alpha):
    out = subprocess.run(
        [binary, "stability", "--m", repr(m), "--n", repr(n), "--re", repr(re_lower),
         "--wavenumber", repr(alpha)],
        check=True, capture_output=True, text=True,
    ).stdout
    found = re.search(r"wave speed c = ([-+0-9.eE]+) ([-+][0-9.eE]+)i", out)
    if not found:
        sys.exit(f"cannot read the wave speed from `lamella stability`:\n{out}")
    return complex(float(found.group(1)), float(found.group(2)))


def main():
    if len(sys.argv) != 2:
        sys.exit(__doc__)
    for m, n, re_lower, alpha in CASES:
        ours = lamella_wave_speed(sys.argv[1], m, n, re_lower, alpha)
        theirs = leading_wave_speed(m, n, re_lower, alpha)
        gap = abs(ours - theirs)
        line = (f"m = {m}, n = {n}, Re = {re_lower}, k h = {alpha:.6f}: lamella {ours:.8f}, "
                f"independent {theirs:.8f}, |dc| = {gap:.1e}")
        if not gap <= TOLERANCE:
            sys.exit(f"DISAGREE {line} (tolerance {TOLERANCE})")
        print(f"agree {line}")
    print("stability cross-check OK")


if __name__ == "__main__":
    main()
