#!/usr/bin/env python3
"""Runs a very viscous lid-driven cavity with `lamella` and checks it against an independent solver.

Usage: python tests/cavity_crosscheck.py PATH/TO/lamella

The case: a 1 mm square cavity of a 0.1 Pa·s liquid (density 1000 kg/m³) under a lid sliding at
0.1 m/s, Re = 1, 20 particles across, run for 20 lid transits (L/U = 0.01 s) with Lamella's
defaults (explicit viscosity, particle shifting on, automatic sound speed). Checks:

1. No fluid particle is ever inside a wall: in every snapshot every fluid particle lies in the
   open cavity (0, L)².
2. The velocity on the two centre lines at the end agrees with the steady Navier-Stokes solution
   at Re = 1 to 0.05 of the lid speed (the bound the Re = 100 cavity validation uses against
   Ghia, Ghia & Shin 1982).

The reference is computed here, not taken from Lamella: the stream function psi of the steady
two-dimensional Navier-Stokes equations, nu lap^2 psi = u d(omega)/dx + v d(omega)/dy with
u = dpsi/dy, v = -dpsi/dx, omega = -lap psi, on a uniform grid with the second-order 13-point
finite-difference biharmonic stencil (recalled from memory), no slip through ghost nodes, the
convective term by Picard iteration, and the sparse system solved by scipy (SuperLU). The script
checks its own solver first: in the Stokes limit the primary eddy's centre and strength must be
those of the Stokes driven cavity, psi_min = -0.1000 U L at y = 0.76 L on the vertical centre line
(Shankar & Deshpande 2000, "Fluid mechanics in the driven cavity", Annu. Rev. Fluid Mech. 32,
§3; recalled from memory), and the Re = 1 centre-line profiles must agree between 64 and 128
cells to 1e-3 U. Exits non-zero with a message on the first failure.
"""

import glob
import os
import subprocess
import sys
import tempfile

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spl
import vtk
from vtk.util.numpy_support import vtk_to_numpy

SIDE = 1.0e-3  # m
LID = 0.1  # m/s
VISCOSITY = 0.1  # Pa·s
DENSITY = 1000.0  # kg/m³
SPACING = 5.0e-5  # m, 20 particles across
TRANSITS = 20
BOUND = 0.05  # of the lid speed

CASE = f"""#![enable(implicit_some)]
(
    title: "Viscous lid-driven cavity, Re = 1",
    dimension: 2,
    domain: (lower: [0.0, 0.0], upper: [{SIDE}, {SIDE}]),
    particles: (spacing: {SPACING}),
    phases: [(name: "glaze", density: {DENSITY}, viscosity_law: Newtonian(viscosity: {VISCOSITY}))],
    regions: [Fill(phase: "glaze")],
    walls: [(side: Left), (side: Right), (side: Bottom), (side: Top, velocity: [{LID}, 0.0])],
    scales: (expected_max_speed: {LID}, reference_length: {SIDE}),
    time: (end: {TRANSITS * SIDE / LID}, snapshot_interval: {SIDE / LID}),
)
"""


def cavity_stream_function(cells, reynolds, sweeps=30):
    """psi on the (cells + 1)² grid of the unit cavity (lid speed 1), and the grid spacing."""
    h = 1.0 / cells
    n = cells - 1
    stencil = {
        (0, 0): 20.0, (1, 0): -8.0, (-1, 0): -8.0, (0, 1): -8.0, (0, -1): -8.0,
        (1, 1): 2.0, (1, -1): 2.0, (-1, 1): 2.0, (-1, -1): 2.0,
        (2, 0): 1.0, (-2, 0): 1.0, (0, 2): 1.0, (0, -2): 1.0,
    }

    def node(i, j):
        """psi(i, j) as (unknown index or None, constant): walls psi = 0, ghosts mirror."""
        if 1 <= i <= n and 1 <= j <= n:
            return (i - 1) * n + (j - 1), 0.0
        if i in (0, cells) or j in (0, cells):
            return None, 0.0
        if i == -1:
            return node(1, j)
        if i == cells + 1:
            return node(cells - 1, j)
        if j == -1:
            return node(i, 1)
        index, constant = node(i, cells - 1)  # lid: dpsi/dy = 1
        return index, constant + 2.0 * h

    rows, cols, vals = [], [], []
    boundary = np.zeros(n * n)
    for i in range(1, cells):
        for j in range(1, cells):
            row = (i - 1) * n + (j - 1)
            for (di, dj), c in stencil.items():
                index, constant = node(i + di, j + dj)
                if index is not None:
                    rows.append(row)
                    cols.append(index)
                    vals.append(c)
                boundary[row] -= c * constant
    solve = spl.factorized(sp.csc_matrix((vals, (rows, cols)), shape=(n * n, n * n)))

    def padded(interior):
        """psi with one ghost layer around the grid (no slip, lid speed 1)."""
        p = np.zeros((cells + 3, cells + 3))
        p[2:cells + 1, 2:cells + 1] = interior.reshape(n, n)
        p[0, :] = p[2, :]
        p[cells + 2, :] = p[cells, :]
        p[:, 0] = p[:, 2]
        p[:, cells + 2] = p[:, cells] + 2.0 * h
        return p

    psi = solve(boundary)
    for _ in range(sweeps if reynolds > 0 else 0):
        p = padded(psi)
        omega = -(p[2:, 1:-1] + p[:-2, 1:-1] + p[1:-1, 2:] + p[1:-1, :-2] - 4 * p[1:-1, 1:-1]) / h**2
        u = (p[2:cells + 1, 3:cells + 2] - p[2:cells + 1, 1:cells]) / (2 * h)
        v = -(p[3:cells + 2, 2:cells + 1] - p[1:cells, 2:cells + 1]) / (2 * h)
        o = omega  # indices of omega are shifted by one against p
        dodx = (o[2:cells + 1, 1:cells] - o[0:cells - 1, 1:cells]) / (2 * h)
        dody = (o[1:cells, 2:cells + 1] - o[1:cells, 0:cells - 1]) / (2 * h)
        convective = reynolds * (u * dodx + v * dody)
        updated = solve(boundary - h**4 * convective.ravel())
        change = np.abs(updated - psi).max()
        psi = updated
        if change < 1e-12:
            break
    full = np.zeros((cells + 1, cells + 1))
    full[1:cells, 1:cells] = psi.reshape(n, n)
    return full, h


def centre_lines(cells, reynolds):
    """(s, u on x = 1/2 at y = s, v on y = 1/2 at x = s), lid speed 1."""
    psi, h = cavity_stream_function(cells, reynolds)
    mid = cells // 2
    u = np.gradient(psi[mid, :], h)
    v = -np.gradient(psi[:, mid], h)
    u[0], u[-1], v[0], v[-1] = 0.0, 1.0, 0.0, 0.0
    return np.linspace(0.0, 1.0, cells + 1), u, v


def check_reference():
    psi, _ = cavity_stream_function(128, 0.0)
    mid = psi[64, :]
    at = np.argmin(mid) / 128
    if not (abs(mid.min() + 0.1000) < 5e-4 and abs(at - 0.76) < 0.01):
        sys.exit(f"reference solver: Stokes eddy psi_min = {mid.min():.4f} at y = {at:.3f}, "
                 "expected -0.1000 at 0.76")
    s64, u64, v64 = centre_lines(64, 1.0)
    s128, u128, v128 = centre_lines(128, 1.0)
    gap = max(np.abs(np.interp(s64, s128, u128) - u64).max(),
              np.abs(np.interp(s64, s128, v128) - v64).max())
    if gap > 1e-3:
        sys.exit(f"reference solver: 64 and 128 cells differ by {gap:.1e} U")
    print(f"reference: Stokes eddy psi_min = {mid.min():.4f} U L at y = {at:.3f} L; "
          f"Re = 1 centre lines converged to {gap:.1e} U")
    return s128, u128, v128


def read(path):
    reader = vtk.vtkXMLPolyDataReader()
    reader.SetFileName(path)
    reader.Update()
    data = reader.GetOutput()
    points = vtk_to_numpy(data.GetPoints().GetData())
    fields = data.GetPointData()
    arrays = {fields.GetArrayName(i): vtk_to_numpy(fields.GetArray(i))
              for i in range(fields.GetNumberOfArrays())}
    time = vtk_to_numpy(data.GetFieldData().GetArray("time"))[0]
    fluid = arrays["kind"] == 0
    return time, points[fluid, :2], arrays["velocity"][fluid, :2]


def main():
    if len(sys.argv) != 2:
        sys.exit(__doc__)
    s, u_ref, v_ref = check_reference()
    with tempfile.TemporaryDirectory() as work:
        case = os.path.join(work, "viscous-cavity.ron")
        with open(case, "w") as f:
            f.write(CASE)
        run = os.path.join(work, "run")
        subprocess.run([sys.argv[1], "--quiet", "run", case, "--out", run], check=True)
        snapshots = sorted(glob.glob(os.path.join(run, "snapshots", "state_*.vtp")))
        if len(snapshots) != TRANSITS + 1:
            sys.exit(f"expected {TRANSITS + 1} snapshots, found {len(snapshots)}")
        for path in snapshots:
            time, x, _ = read(path)
            outside = ~((x > 0.0) & (x < SIDE)).all(axis=1)
            if outside.any():
                sys.exit(f"t = {time:.4f} s: {outside.sum()} fluid particles inside a wall, "
                         f"e.g. at {x[outside][0]} m")
        time, x, velocity = read(snapshots[-1])
    u = velocity / LID
    xs = x / SIDE
    band = SPACING / SIDE
    worst = []
    # (name, along which axis the line runs, the velocity component, the reference). The
    # particles within one spacing of a line are averaged in bins two spacings long, so that
    # the comparison is of the flow and not of one particle's noise.
    edges = np.arange(0.1, 0.9 + 1e-9, 2 * band)
    for name, along, component, ref in (("u on x = L/2", 1, 0, u_ref), ("v on y = L/2", 0, 1, v_ref)):
        across = 1 - along
        near = np.abs(xs[:, across] - 0.5) < band
        position, value = xs[near, along], u[near, component]
        which = np.digitize(position, edges) - 1
        gaps = []
        for b in range(len(edges) - 1):
            inside = which == b
            if inside.sum() == 0:
                sys.exit(f"{name}: no particle between {edges[b]:.2f} and {edges[b + 1]:.2f} L")
            mean_at = position[inside].mean()
            gaps.append((abs(value[inside].mean() - np.interp(mean_at, s, ref)), mean_at))
        gap, where = max(gaps)
        worst.append((gap, name, where, near.sum()))
    for gap, name, where, count in worst:
        print(f"t = {time:.3f} s, {name}: max |SPH - Navier-Stokes| = {gap:.4f} U "
              f"at {where:.3f} L (bin means of the {count} particles within one spacing of the line)")
    if max(w[0] for w in worst) > BOUND:
        sys.exit(f"centre-line velocity off by more than {BOUND} U")
    print(f"no particle in a wall over {TRANSITS} lid transits; viscous cavity cross-check OK")


if __name__ == "__main__":
    main()
