#!/usr/bin/env python3
"""Reference readings of Touchstone files by scikit-rf (BSD-3, https://scikit-rf.org).

Default: read every file in tests/data/touchstone/ with scikit-rf and write their S matrices
(at the references), reference impedances and frequencies to tests/reference/skrf_touchstone.json,
naming the scikit-rf and numpy versions. tests/touchstone_reader.rs compares the Rust reader
against that committed file.

`--external DIR OUT.json`: the same for the 1- and 2-port S/Z/Y files of DIR (a development
check of files written outside the project; OUT is a scratch file, never committed).

One correction is applied, and recorded per file: scikit-rf (seen in 2.2.0) multiplies version 1
Y data by R, while the Touchstone standard normalises admittance as y = Y*R, so Y = y/R. For
those files the reference is rebuilt with scikit-rf's own y2s from Y = (scikit-rf's Y)/R^2.
"""
import json
import pathlib
import sys
import warnings

import numpy
import skrf
from skrf.io.touchstone import Touchstone

ROOT = pathlib.Path(__file__).resolve().parent.parent
DATA = ROOT / "data" / "touchstone"
OUT = ROOT / "reference" / "skrf_touchstone.json"


def v1_y_correction(path, network):
    """S at the references for a version 1 Y file, with the standard's y = Y*R (see above)."""
    ts = Touchstone(str(path))
    if ts.version != "1.0" or ts.parameter.lower() != "y":
        return None
    r = network.z0.real
    y_true = network.y / (r[:, :, None] * r[:, None, :])
    return skrf.network.y2s(y_true, network.z0)


def reading(path):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        network = skrf.Network(str(path))
        corrected = v1_y_correction(path, network)
    s = network.s if corrected is None else corrected
    entry = {
        "ports": int(network.nports),
        "freq_hz": [float(f) for f in network.f],
        # Per frequency, row-major n x n, each entry [re, im].
        "s": [[[float(v.real), float(v.imag)] for v in m.ravel()] for m in s],
        # Per port at the first frequency, [re, im] (scikit-rf allows complex references).
        "z0": [[float(z.real), float(z.imag)] for z in network.z0[0]] if len(network.f) else [],
    }
    if corrected is not None:
        entry["note"] = "version 1 Y data: reference rebuilt with skrf.network.y2s from Y = y/R"
    return entry


def header():
    return {
        "generator": "tests/reference/skrf_touchstone.py",
        "scikit-rf": skrf.__version__,
        "numpy": numpy.__version__,
        "python": sys.version.split()[0],
    }


def main(argv):
    if len(argv) == 4 and argv[1] == "--external":
        folder, out = pathlib.Path(argv[2]), pathlib.Path(argv[3])
        files = {}
        for path in sorted(folder.iterdir()):
            if path.suffix.lower() in (".txt", ".md"):
                continue
            try:
                entry = reading(path)
            except Exception as e:  # a file scikit-rf cannot read is reported, not fatal
                files[path.name] = {"error": f"{type(e).__name__}: {e}"}
                continue
            if entry["ports"] <= 2:
                files[path.name] = entry
        out.write_text(json.dumps({**header(), "files": files}, indent=1))
        return 0
    if len(argv) != 1:
        print(__doc__, file=sys.stderr)
        return 2
    files = {path.name: reading(path) for path in sorted(DATA.iterdir())}
    OUT.write_text(json.dumps({**header(), "files": files}, indent=1) + "\n")
    print(f"wrote {OUT} ({len(files)} files, scikit-rf {skrf.__version__})")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
