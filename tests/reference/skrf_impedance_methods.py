#!/usr/bin/env python3
"""Reference S-parameters of two-terminal parts in the three measurement set-ups, by scikit-rf
(BSD-3, https://scikit-rf.org), for src/ingest/method.rs to turn back into impedance.

For each impedance Z and each pair of real port references (equal and unequal):
- reflection: the 1-port S of Z (skrf.network.z2s on the 1x1 matrix [[Z]]),
- series: the 2-port S of Z between the ports, from its admittance matrix
  [[1/Z, -1/Z], [-1/Z, 1/Z]] (skrf.network.y2s),
- shunt: the 2-port S of Z from the line to ground, from its impedance matrix
  [[Z, Z], [Z, Z]] (skrf.network.z2s).
Power-wave definition (s_def="power", Kurokawa 1965), which Touchstone data at real references
follow. (scikit-rf 2.2.0's "pseudo" y2s differs by ~1e-7 for the singular series Y matrix, a
numerical artefact, so "power" is used.) Writes tests/reference/skrf_impedance_methods.json naming the versions.
"""
import json
import pathlib
import platform

import numpy
import skrf

OUT = pathlib.Path(__file__).resolve().parent / "skrf_impedance_methods.json"

# PHYSICS.md §2 worked impedances, a small and a large one.
IMPEDANCES = [complex(43.552, 87.103), complex(174.207, 87.103), complex(1567.86, 783.93),
              complex(0.5, -3.0), complex(12000.0, -4000.0)]
REFERENCES = [[50.0, 50.0], [50.0, 75.0], [75.0, 50.0]]


def pair(c):
    return [float(c.real), float(c.imag)]


def s_of(kind, z, refs):
    z0 = numpy.array([refs], dtype=complex)
    if kind == "reflection":
        m = numpy.array([[[z]]])
        z0 = z0[:, :1]
        conv = skrf.network.z2s
    elif kind == "series":
        m = numpy.array([[[1 / z, -1 / z], [-1 / z, 1 / z]]])
        conv = skrf.network.y2s
    else:
        m = numpy.array([[[z, z], [z, z]]])
        conv = skrf.network.z2s
    s = conv(m, z0, s_def="power")[0]
    return [pair(v) for v in s.ravel()]


def main():
    cases = []
    for kind in ["reflection", "series", "shunt"]:
        for refs in REFERENCES:
            if kind == "reflection" and refs[0] != refs[1]:
                continue
            for z in IMPEDANCES:
                cases.append({"method": kind, "z0": refs if kind != "reflection" else refs[:1],
                              "z_ohm": pair(z), "s": s_of(kind, z, refs)})
    doc = {
        "generator": "tests/reference/skrf_impedance_methods.py",
        "scikit-rf": skrf.__version__,
        "numpy": numpy.__version__,
        "python": platform.python_version(),
        "layout": "s is row-major (S11, S12, S21, S22 for 2 ports), each entry [re, im]",
        "cases": cases,
    }
    OUT.write_text(json.dumps(doc, indent=1) + "\n")


if __name__ == "__main__":
    main()
