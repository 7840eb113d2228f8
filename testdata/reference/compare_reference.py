#!/usr/bin/env python3
"""Compare reference values regenerated from their sources with the
committed ones: `compare_reference.py COMMITTED REGENERATED` walks both
folders and exits 1, listing every difference, when a file is missing or
new, when text or structure differs, or when two numbers differ by more
than 1e-9 relative (1e-12 absolute).

The tolerance exists because the last digits of an iterative fit depend
on the BLAS build and the processor's vector instructions (seen: the 12th
significant digit of a Wisconsin fit differed between two machines with
the same Debian packages); every Go test compares at 1e-6 or coarser, so
a tolerance of 1e-9 still catches any change of method or data. JSON
files are compared as JSON, CSV files field by field, Excel workbooks
(.xlsx) by their content as openpyxl reads it (sheets in order, every
cell's value, type and number format, formulas and their stored values,
merged ranges; the zip's bytes differ with the zlib build), every other
file byte for byte."""
import csv
import json
import math
import os
import sys

REL, ABS = 1e-9, 1e-12


def close(a, b):
    if isinstance(a, bool) or isinstance(b, bool):
        return a == b
    if isinstance(a, (int, float)) and isinstance(b, (int, float)):
        if math.isnan(a) or math.isnan(b):
            return math.isnan(a) and math.isnan(b)
        return abs(a - b) <= max(ABS, REL * max(abs(a), abs(b)))
    return a == b


def walk(a, b, where, out):
    if isinstance(a, dict) and isinstance(b, dict):
        if set(a) != set(b):
            out.append(f"{where}: keys {sorted(set(a) ^ set(b))} in only one")
        for k in sorted(set(a) & set(b)):
            walk(a[k], b[k], f"{where}.{k}", out)
    elif isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            out.append(f"{where}: {len(a)} items, regenerated {len(b)}")
        for i, (x, y) in enumerate(zip(a, b)):
            walk(x, y, f"{where}[{i}]", out)
    elif not close(a, b):
        out.append(f"{where}: committed {a!r}, regenerated {b!r}")


def number(s):
    try:
        return float(s)
    except ValueError:
        return s


def compare(path_a, path_b, name, out):
    if name.endswith(".json"):
        with open(path_a) as fa, open(path_b) as fb:
            walk(json.load(fa), json.load(fb), name, out)
    elif name.endswith(".csv"):
        with open(path_a, newline="") as fa, open(path_b, newline="") as fb:
            ra, rb = list(csv.reader(fa)), list(csv.reader(fb))
        walk([[number(c) for c in r] for r in ra], [[number(c) for c in r] for r in rb], name, out)
    elif name.endswith(".xlsx"):
        walk(workbook(path_a), workbook(path_b), name, out)
    else:
        with open(path_a, "rb") as fa, open(path_b, "rb") as fb:
            if fa.read() != fb.read():
                out.append(f"{name}: differs")


def workbook(path):
    """A workbook's content: per sheet, its merged ranges and every cell
    with a value (formula and stored value, type, number format)."""
    import openpyxl
    content = []
    formulas = openpyxl.load_workbook(path)
    stored = openpyxl.load_workbook(path, data_only=True)
    for ws, wv in zip(formulas.worksheets, stored.worksheets):
        cells = []
        for row, vrow in zip(ws.iter_rows(), wv.iter_rows()):
            for c, v in zip(row, vrow):
                if c.value is not None or v.value is not None:
                    cells.append([c.coordinate, str(c.value) if not isinstance(c.value, (int, float)) else c.value,
                                  str(v.value) if not isinstance(v.value, (int, float)) else v.value,
                                  c.data_type, c.number_format])
        content.append({"title": ws.title, "merged": sorted(str(m) for m in ws.merged_cells.ranges), "cells": cells})
    content.append({"epoch": str(formulas.epoch)})
    return content


def files(top):
    found = set()
    for d, _, names in os.walk(top):
        for n in names:
            if "__pycache__" not in d:
                found.add(os.path.relpath(os.path.join(d, n), top))
    return found


def main():
    a, b = sys.argv[1], sys.argv[2]
    fa, fb = files(a), files(b)
    out = [f"{n}: only in the committed files" for n in sorted(fa - fb)]
    out += [f"{n}: new, not committed" for n in sorted(fb - fa)]
    for n in sorted(fa & fb):
        compare(os.path.join(a, n), os.path.join(b, n), n, out)
    for line in out[:50]:
        print(line)
    if len(out) > 50:
        print(f"… and {len(out) - 50} more")
    sys.exit(1 if out else 0)


if __name__ == "__main__":
    main()
