#!/usr/bin/env python3
"""Checks that the official VTK library reads every snapshot Lamella writes.

Usage: python tests/vtk_opens.py PATH/TO/lamella

Writes a tiny two-layer case into a temporary folder, runs `lamella run` on it, then opens
`snapshots/snapshots.pvd` with VTK's XML parser and every listed `.vtp` with VTK's
vtkXMLPolyDataReader, checking point counts, array names, types, field data and known values
(at t = 0 every particle has its phase's density and viscosity and sits at its initial
position, and the fluid at rest has zero shear rate; wall particles have no shear rate, NaN). Exits non-zero with a message on the first failed check.
"""

import subprocess
import sys
import tempfile
from pathlib import Path

import numpy
from vtkmodules.util.numpy_support import vtk_to_numpy
from vtkmodules.vtkIOXML import vtkXMLPolyDataReader
from vtkmodules.vtkIOXMLParser import vtkXMLDataParser

CASE = """
#![enable(implicit_some)]
(
    title: "VTK reader check",
    dimension: 2,
    domain: (lower: [0.0, 0.0], upper: [4.0e-4, 4.0e-4], periodic: [X]),
    particles: (spacing: 4.0e-5, smoothing_ratio: 1.3, kernel: WendlandC2),
    phases: [
        (name: "syrup", density: 1000.0, viscosity_law: Newtonian(viscosity: 5.0e-3)),
        (name: "water", density: 1200.0, viscosity_law: Newtonian(viscosity: 1.0e-3)),
    ],
    pair_viscosity: Harmonic,
    regions: [
        Layer(phase: "syrup", bottom: 0.0, top: 2.0e-4),
        Layer(phase: "water", bottom: 2.0e-4, top: 4.0e-4),
    ],
    walls: [(side: Bottom, layers: 3), (side: Top, layers: 3)],
    body_force: [0.05, 0.0],
    scales: (expected_max_speed: 4.0e-3),
    equation_of_state: Linear(background_pressure: 0.0),
    density_tolerance: 0.05,
    time: (end: 2.0e-3, snapshot_interval: 1.0e-3),
)
"""

SCALARS = {  # name -> VTK type names accepted (VTK maps UInt64 to long or long long)
    "density": {"double"},
    "pressure": {"double"},
    "mass": {"double"},
    "viscosity": {"double"},
    "phase": {"unsigned short"},
    "id": {"unsigned long", "unsigned long long"},
    "kind": {"unsigned char"},
    "shear_rate": {"double"},
}
VECTORS = ["velocity", "initial_position"]
PHASE_DENSITY = [1000.0, 1200.0]
PHASE_VISCOSITY = [5.0e-3, 1.0e-3]


def fail(message):
    print(f"vtk_opens: FAILED: {message}", file=sys.stderr)
    sys.exit(1)


def check(condition, message):
    if not condition:
        fail(message)


def read_collection(pvd):
    parser = vtkXMLDataParser()
    parser.SetFileName(str(pvd))
    check(parser.Parse() == 1, f"VTK's XML parser cannot parse {pvd}")
    root = parser.GetRootElement()
    check(root.GetName() == "VTKFile", f"{pvd}: root element is {root.GetName()}")
    check(root.GetAttribute("type") == "Collection", f"{pvd}: not a Collection")
    collection = root.FindNestedElementWithName("Collection")
    check(collection is not None, f"{pvd}: no Collection element")
    entries = []
    for k in range(collection.GetNumberOfNestedElements()):
        element = collection.GetNestedElement(k)
        check(element.GetName() == "DataSet", f"{pvd}: unexpected {element.GetName()}")
        entries.append((float(element.GetAttribute("timestep")), element.GetAttribute("file")))
    check(len(entries) >= 2, f"{pvd}: only {len(entries)} snapshots listed")
    times = [t for t, _ in entries]
    check(times == sorted(set(times)), f"{pvd}: times not increasing: {times}")
    return entries


def read_snapshot(path):
    errors = []
    reader = vtkXMLPolyDataReader()
    reader.AddObserver("ErrorEvent", lambda obj, event: errors.append(event))
    check(reader.CanReadFile(str(path)) == 1, f"vtkXMLPolyDataReader cannot read {path}")
    reader.SetFileName(str(path))
    reader.Update()
    check(not errors, f"{path}: VTK reported errors while reading")
    return reader.GetOutput()


def check_snapshot(path, time, first):
    data = read_snapshot(path)
    n = data.GetNumberOfPoints()
    check(n > 0, f"{path}: no points")
    check(data.GetNumberOfVerts() == n, f"{path}: {data.GetNumberOfVerts()} vertices, {n} points")
    points = vtk_to_numpy(data.GetPoints().GetData())
    check(points.dtype.name == "float64", f"{path}: points are {points.dtype}")
    pd = data.GetPointData()
    arrays = {}
    for name, types in SCALARS.items():
        array = pd.GetAbstractArray(name)
        check(array is not None, f"{path}: point array {name} missing")
        check(array.GetDataTypeAsString() in types, f"{path}: {name} is {array.GetDataTypeAsString()}")
        check(array.GetNumberOfComponents() == 1, f"{path}: {name} has several components")
        check(array.GetNumberOfTuples() == n, f"{path}: {name} has {array.GetNumberOfTuples()} values")
        arrays[name] = vtk_to_numpy(array)
    for name in VECTORS:
        array = pd.GetAbstractArray(name)
        check(array is not None, f"{path}: point array {name} missing")
        check(array.GetDataTypeAsString() == "double", f"{path}: {name} is not double")
        check(array.GetNumberOfComponents() == 3, f"{path}: {name} is not a 3-vector")
        check(array.GetNumberOfTuples() == n, f"{path}: {name} has the wrong length")
        arrays[name] = vtk_to_numpy(array)

    fd = data.GetFieldData()
    for name in ["time", "step", "dimension", "case_name"]:
        check(fd.GetAbstractArray(name) is not None, f"{path}: field data {name} missing")
    check(fd.GetArray("time").GetValue(0) == time, f"{path}: field time differs from the .pvd")
    check(fd.GetArray("dimension").GetValue(0) == 2, f"{path}: dimension is not 2")
    check(fd.GetAbstractArray("case_name").GetValue(0) == "vtkcheck", f"{path}: wrong case name")

    check(sorted(arrays["id"].tolist()) == list(range(n)), f"{path}: ids are not 0..n-1")
    check(set(arrays["kind"].tolist()) == {0, 1}, f"{path}: kinds are not fluid and wall")
    check(set(arrays["phase"].tolist()) <= {0, 1}, f"{path}: unknown phase index")
    fluid = arrays["kind"] == 0
    shear = arrays["shear_rate"]
    check(numpy.isnan(shear[~fluid]).all(), f"{path}: a wall particle has a shear rate")
    check((numpy.isfinite(shear[fluid]) & (shear[fluid] >= 0.0)).all(), f"{path}: shear rate")
    if first:
        check(time == 0.0 and fd.GetArray("step").GetValue(0) == 0, f"{path}: not at t = 0")
        check((arrays["initial_position"] == points).all(), f"{path}: moved at t = 0")
        for phase in (0, 1):
            mine = fluid & (arrays["phase"] == phase)
            check(mine.any(), f"{path}: phase {phase} has no fluid particle")
            check((arrays["density"][mine] == PHASE_DENSITY[phase]).all(), f"{path}: density")
            check((arrays["viscosity"][mine] == PHASE_VISCOSITY[phase]).all(), f"{path}: viscosity")
        check((shear[fluid] == 0.0).all(), f"{path}: shear rate of the fluid at rest")
        # The lower layer is the first phase (known from the case).
        low = fluid & (points[:, 1] < 1.5e-4)
        check((arrays["phase"][low] == 0).all(), f"{path}: lower layer is not phase 0")
    else:
        check(shear[fluid].max() > 0.0, f"{path}: the driven fluid has no shear rate")
    return n


def main():
    if len(sys.argv) != 2:
        fail("usage: vtk_opens.py PATH/TO/lamella")
    lamella = Path(sys.argv[1]).resolve()
    with tempfile.TemporaryDirectory() as work:
        work = Path(work)
        case = work / "vtkcheck.ron"
        case.write_text(CASE)
        out = work / "run"
        done = subprocess.run([str(lamella), "--quiet", "run", str(case), "--out", str(out)])
        check(done.returncode == 0, f"lamella run exited with {done.returncode}")
        pvd = out / "snapshots" / "snapshots.pvd"
        entries = read_collection(pvd)
        counts = set()
        for k, (time, file) in enumerate(entries):
            counts.add(check_snapshot(pvd.parent / file, time, k == 0))
        check(len(counts) == 1, f"particle counts differ between snapshots: {counts}")
        print(f"vtk_opens: VTK read {len(entries)} snapshots of {counts.pop()} particles: ok")


if __name__ == "__main__":
    main()
