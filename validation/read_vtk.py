#!/usr/bin/env python3
"""Read coilfield's VTK XML files back with the real VTK library and print them as JSON.

Usage: read_vtk.py FILE.vtr|FILE.vtp|FILE.vtu|FILE.pvd

The tests run this script and compare what VTK itself reads (points, point and cell arrays)
with coilfield's own JSON for the same points, so a file that VTK misreads fails a test.
A .pvd collection is parsed as XML (VTK's Python package has no .pvd reader; ParaView does) and
every data set it lists is read with VTK.
"""

import json
import math
import os
import sys
import xml.etree.ElementTree as ET

import vtk


def arrays(data):
    out = {}
    for k in range(data.GetNumberOfArrays()):
        arr = data.GetArray(k)
        n_comp = arr.GetNumberOfComponents()
        values = []
        for i in range(arr.GetNumberOfTuples()):
            t = arr.GetTuple(i)
            # JSON has no NaN: write null, which the Rust side reads back as "no value".
            t = [None if math.isnan(x) else x for x in t]
            values.append(t if n_comp > 1 else t[0])
        out[arr.GetName()] = {"n_comp": n_comp, "values": values}
    return out


def read(path):
    if path.endswith(".vtr"):
        reader = vtk.vtkXMLRectilinearGridReader()
    elif path.endswith(".vtp"):
        reader = vtk.vtkXMLPolyDataReader()
    elif path.endswith(".vtu"):
        reader = vtk.vtkXMLUnstructuredGridReader()
    else:
        raise SystemExit(f"{path}: not a .vtr, .vtp, .vtu or .pvd file")
    reader.SetFileName(path)
    reader.Update()
    if reader.GetErrorCode() != 0:
        raise SystemExit(f"{path}: VTK could not read the file")
    ds = reader.GetOutput()
    out = {
        "file": os.path.basename(path),
        "class": ds.GetClassName(),
        "n_points": ds.GetNumberOfPoints(),
        "n_cells": ds.GetNumberOfCells(),
        "points": [list(ds.GetPoint(i)) for i in range(ds.GetNumberOfPoints())],
        "point_data": arrays(ds.GetPointData()),
        "cell_data": arrays(ds.GetCellData()),
    }
    if path.endswith(".vtr"):
        out["dimensions"] = list(ds.GetDimensions())
    return out


def main():
    if len(sys.argv) != 2:
        raise SystemExit(__doc__)
    path = sys.argv[1]
    if path.endswith(".pvd"):
        root = ET.parse(path).getroot()
        if root.get("type") != "Collection":
            raise SystemExit(f"{path}: not a VTK collection")
        base = os.path.dirname(path)
        sets = [
            read(os.path.join(base, d.get("file")))
            for d in root.iter("DataSet")
        ]
        print(json.dumps({"collection": sets}))
    else:
        print(json.dumps(read(path)))


if __name__ == "__main__":
    main()
