"""Reference verdicts for the material file format, from Python's `jsonschema` (PyPI).

Validates the committed example material file (material_example.json, written by
`mucurve publish`, sample indices and the empty sanity list added by hand and resealed with self_hash below) and a set of single-change variants of it against
src/library/material.schema.json with jsonschema's Draft 2020-12 validator, and recomputes the
example's self-hash with hashlib over Python's own canonical JSON (keys sorted, no whitespace).
Writes material_schema_cases.json; the Rust tests compare the crate's schema validator with
these verdicts. Run: python3 tests/reference/material_schema_cases.py
"""
import copy
import hashlib
import json
import pathlib
import re
import sys
from importlib.metadata import version

import jsonschema

HERE = pathlib.Path(__file__).resolve().parent
SCHEMA = HERE.parent.parent / "src" / "library" / "material.schema.json"
EXAMPLE = HERE / "material_example.json"
OUT = HERE / "material_schema_cases.json"


def number_text(x):
    """A float as serde_json (ryu) writes it: shortest round-trip digits, exponent without
    '+' or leading zeros, and '.0' on integral values."""
    s = repr(float(x))
    if "e" in s:
        mant, exp = s.split("e")
        return f"{mant}e{int(exp)}"
    return s


def canonical(v):
    if isinstance(v, dict):
        return "{" + ",".join(json.dumps(k, ensure_ascii=False) + ":" + canonical(v[k]) for k in sorted(v)) + "}"
    if isinstance(v, list):
        return "[" + ",".join(canonical(x) for x in v) + "]"
    if isinstance(v, bool) or v is None or isinstance(v, str):
        return json.dumps(v, ensure_ascii=False)
    if isinstance(v, int):
        return str(v)
    return number_text(v)


def self_hash(doc):
    body = {k: v for k, v in doc.items() if k != "sha256"}
    return hashlib.sha256(canonical(body).encode("utf-8")).hexdigest()


def variant(doc, change):
    d = copy.deepcopy(doc)
    change(d)
    return d


def main():
    schema = json.loads(SCHEMA.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    validator = jsonschema.Draft202012Validator(schema)
    doc = json.loads(EXAMPLE.read_text(encoding="utf-8"))

    def set_path(path, value):
        def change(d):
            *parents, last = path
            for p in parents:
                d = d[p]
            d[last] = value
        return change

    def delete(path):
        def change(d):
            *parents, last = path
            for p in parents:
                d = d[p]
            del d[last]
        return change

    changes = {
        "example as published": lambda d: None,
        "version 2": set_path(["version"], 2),
        "version written as 3.0": set_path(["version"], 3.0),
        "note null": set_path(["note"], None),
        "extra field inside kk (allowed)": set_path(["kk", "future_field"], 1),
        "runner_up given": set_path(["runner_up"], {"model": "debye", "delta_bic": 12.5}),
        "version 0": set_path(["version"], 0),
        "version 1.5": set_path(["version"], 1.5),
        "version as text": set_path(["version"], "1"),
        "schema_version 2": set_path(["schema_version"], 2),
        "material upper case": set_path(["material"], "Example"),
        "material with slash": set_path(["material"], "a/b"),
        "material starting with dot": set_path(["material"], ".a"),
        "material of 65 characters": set_path(["material"], "a" * 65),
        "material of 64 characters": set_path(["material"], "a" * 64),
        "created with offset": set_path(["created"], "2024-05-01T12:00:00+01:00"),
        "created without seconds": set_path(["created"], "2024-05-01T12:00Z"),
        "sha256 upper case": set_path(["sha256"], doc["sha256"].upper()),
        "sha256 too short": set_path(["sha256"], doc["sha256"][:63]),
        "missing sha256": delete(["sha256"]),
        "missing residuals": delete(["residuals"]),
        "empty residuals": set_path(["residuals"], []),
        "empty provenance": set_path(["provenance"], []),
        "unknown top-level field": set_path(["extra"], True),
        "unknown term kind": set_path(["model", "terms", 0, "kind"], "gauss"),
        "term parameter without stderr": set_path(["model", "terms", 0, "params", "f_hz"], {"value": 1.0}),
        "stderr null": set_path(["model", "terms", 0, "params", "f_hz", "stderr"], None),
        "correlation entry null": set_path(["model", "correlation", 0, 1], None),
        "zero terms": set_path(["model", "terms"], []),
        "band f_min zero": set_path(["band", "f_min_hz"], 0.0),
        "extra field in band": set_path(["band", "f_mid_hz"], 1e7),
        "negative rms_rel": set_path(["stats", "rms_rel"], -0.01),
        "kk pass as text": set_path(["kk", "pass"], "yes"),
        "turns zero": set_path(["provenance", 0, "turns"], 0.0),
        "provenance method null": set_path(["provenance", 0, "method"], None),
        "provenance sha256 not hex": set_path(["provenance", 0, "sha256"], "z" * 64),
        "residual frequency negative": set_path(["residuals", 0, "freq_hz"], -1.0),
        "warnings with a number": set_path(["warnings"], [1]),
        "sanity findings given": set_path(["sanity"], ["Snoek product exceeds the limit"]),
        "sanity with a number": set_path(["sanity"], [1]),
        "sanity null": set_path(["sanity"], None),
        "without sanity (older file)": delete(["sanity"]),
        "runner_up without delta_bic": set_path(["runner_up"], {"model": "debye"}),
        "fit_file extra field": set_path(["fit_file", "size"], 3),
        "correlation labels given": set_path(["model", "correlation_params"], ["mu_inf", "debye#1.delta_mu"]),
        "correlation label not text": set_path(["model", "correlation_params"], [1]),
        "source without sample (older file)": delete(["provenance", 0, "sample"]),
        "residual without sample (older file)": delete(["residuals", 0, "sample"]),
        "source sample written as 1.0": set_path(["provenance", 1, "sample"], 1.0),
        "source sample negative": set_path(["provenance", 0, "sample"], -1),
        "source sample 0.5": set_path(["provenance", 0, "sample"], 0.5),
        "residual sample as text": set_path(["residuals", 0, "sample"], "0"),
    }
    cases = []
    for name, change in changes.items():
        d = variant(doc, change)
        errors = sorted(e.message for e in validator.iter_errors(d))
        cases.append({"name": name, "valid": not errors, "errors": errors, "document": d})

    out = {
        "generator": f"tests/reference/material_schema_cases.py with jsonschema {version('jsonschema')}, "
                     f"Python {sys.version.split()[0]}",
        "example_sha256_stored": doc["sha256"],
        "example_sha256_python": self_hash(doc),
        "cases": cases,
    }
    OUT.write_text(json.dumps(out, ensure_ascii=False) + "\n", encoding="utf-8")
    print(f"{len(cases)} cases, {sum(c['valid'] for c in cases)} valid; "
          f"example hash {'matches' if out['example_sha256_stored'] == out['example_sha256_python'] else 'DIFFERS'}")


if __name__ == "__main__":
    main()
