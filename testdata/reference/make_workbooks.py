"""Writes the Excel workbooks of testdata/reference/xlsx with openpyxl
(Debian's python3-openpyxl), a writer independent of riskaudit's own
workbook reader (archive/zip and encoding/xml), and beside each the values a
reader must find in it, from the Python values given to the writer:

  wdbc.xlsx, wdbc.csv    the Wisconsin rows (testdata/open/wdbc.csv) with an
                         invented visit quarter (a date), a reviewed flag (a
                         boolean) and some numbers stored as text, as
                         formulas with stored values or missing; the CSV
                         holds the same rows as text
  types.xlsx, types.json every kind of cell (numbers, numbers as text, dates,
                         dates and times, times, booleans, formulas, error
                         values, empty cells), the header at B2, a second
                         sheet; the JSON lists what each column holds
  dates1904.xlsx         dates in the 1904 date system
  bad.xlsx               one sheet for each kind of bad cell

openpyxl writes formulas without the value a spreadsheet program stores
when it calculates them; for the formulas that should have one, the value
is written into the sheet's XML afterwards (inject_cached), as a
spreadsheet program would store it. Zip entries carry the time of writing,
so compare_reference.py compares workbooks by their cells, not their
bytes.
"""
import csv
import datetime as dt
import io
import json
import os
import random
import re
import zipfile

import openpyxl
from openpyxl.styles import Font
from openpyxl.utils.datetime import CALENDAR_MAC_1904

FIXED = dt.datetime(2024, 1, 1)


def fixed_properties(wb):
    wb.properties.created = FIXED
    wb.properties.modified = FIXED
    wb.properties.creator = "riskaudit reference script"


def inject_cached(path, sheet_part, values):
    """Store values[cell] as the cached value of each formula cell named,
    in the sheet part of the workbook at path."""
    with zipfile.ZipFile(path) as z:
        parts = {n: z.read(n) for n in z.namelist()}
    xml = parts[sheet_part].decode()
    for ref, v in values.items():
        pat = re.compile(r'(<c r="%s"[^>]*>)(<f>[^<]*</f>)(<v\s*/>|<v></v>|<v>[^<]*</v>)?' % ref)
        xml, n = pat.subn(lambda m: m.group(1) + m.group(2) + "<v>%s</v>" % v, xml)
        assert n == 1, (ref, n)
    parts[sheet_part] = xml.encode()
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for n, b in parts.items():
            z.writestr(zipfile.ZipInfo(n, date_time=(2024, 1, 1, 0, 0, 0)), b, zipfile.ZIP_DEFLATED)


def write_wdbc(out, rows):
    """The Wisconsin rows as a workbook and as CSV, with invented columns."""
    rng = random.Random(16)
    quarters = [dt.date(2021, 1, 1), dt.date(2021, 4, 1), dt.date(2021, 7, 1)]
    wb = openpyxl.Workbook()
    fixed_properties(wb)
    ws = wb.active
    ws.title = "Cohort"
    header = list(rows[0].keys()) + ["quarter", "reviewed"]
    ws.append(header)
    for c in ws[1]:
        c.font = Font(bold=True)
    csv_rows = [header]
    cached = {}
    for i, r in enumerate(rows):
        q = rng.choice(quarters)
        reviewed = rng.random() < 0.5
        line, text = [], []
        for name, v in r.items():
            if name == "diagnosis":
                line.append(v)
                text.append(v)
                continue
            x = float(v)
            if name == "mean_texture" and i % 10 == 3:
                line.append(v)  # a number stored as text
            elif name == "mean_smoothness" and i % 50 == 7:
                line.append(None)  # missing
                v = ""
            else:
                line.append(x)
            text.append(v)
        line += [q, reviewed]
        text += [q.isoformat(), "TRUE" if reviewed else "FALSE"]
        ws.append(line)
        row = ws.max_row
        if i % 25 == 5:
            # mean_radius as a formula with its stored value
            c = ws.cell(row=row, column=1)
            cached["A%d" % row] = repr(c.value)
            c.value = "=ROUND(%r*100,0)/100" % c.value
        csv_rows.append(text)
    about = wb.create_sheet("About")
    about["A1"] = "Invented columns beside the Wisconsin diagnostic breast cancer data"
    about["A1"].font = Font(italic=True)
    about.merge_cells("A1:D1")
    about["A3"] = "rows"
    about["B3"] = "=COUNTA(Cohort!F:F)-1"
    cached["B3@about"] = str(len(rows))
    about["A4"] = 0.5
    about["A4"].number_format = "0.0%"
    path = os.path.join(out, "wdbc.xlsx")
    wb.save(path)
    inject_cached(path, "xl/worksheets/sheet1.xml", {k: v for k, v in cached.items() if "@" not in k})
    inject_cached(path, "xl/worksheets/sheet2.xml", {"B3": cached["B3@about"]})
    with open(os.path.join(out, "wdbc.csv"), "w", newline="") as f:
        csv.writer(f, lineterminator="\n").writerows(csv_rows)


def write_types(out):
    """Every kind of cell, and what each column holds, read as numbers
    and as categories."""
    wb = openpyxl.Workbook()
    fixed_properties(wb)
    ws = wb.active
    ws.title = "Visits"
    names = ["id", "age", "sbp", "sex", "smoker", "visit", "visit14", "seen", "clock", "double", "code", "y"]
    ws.append([])  # row 1 empty: the header is the first row with a value
    ws.append([None] + names)  # column A empty: the header starts at B2
    d0 = dt.date(2023, 12, 30)
    ages = [54, "67", " 71 ", None, "NA", 80.5, 49, 62]
    sbps = [120.5, 1e-7, 123456789012.0, 99.25, 140, 2.675, 135, 118]
    sexes = ["F", "M", " F ", "M", "F", "NA", "M", "F"]
    smokers = [True, False, True, False, None, True, False, False]
    codes = [1, 2, 3, 2, 1, 3.5, 2, 1]
    ys = [0, 1, 0, 1, 1, 0, 0, 1]
    cached = {}
    exp = {k: [] for k in names}
    for i in range(8):
        visit = d0 + dt.timedelta(days=40 * i)
        seen = dt.datetime(2024, 2, 29, 8, 30, 15) + dt.timedelta(hours=7 * i, minutes=i)
        clock = dt.time(7 + i, 5 * i, 30)
        row = [None, i + 1, ages[i], sbps[i], sexes[i], smokers[i], visit, visit, seen, clock, None, codes[i], ys[i]]
        ws.append(row)
        r = ws.max_row
        ws.cell(row=r, column=8).number_format = "mm-dd-yy"  # built-in format 14
        ws.cell(row=r, column=10).number_format = "h:mm:ss"
        ws.cell(row=r, column=11).value = "=B%d*2" % r
        cached["K%d" % r] = str(2 * (i + 1))
        exp["id"].append(i + 1)
        a = ages[i]
        exp["age"].append(None if a in (None, "NA") else float(str(a).strip()))
        exp["sbp"].append(sbps[i])
        exp["sex"].append(None if sexes[i].strip() == "NA" else sexes[i].strip())
        exp["smoker"].append(None if smokers[i] is None else ("TRUE" if smokers[i] else "FALSE"))
        exp["visit"].append(visit.isoformat())
        exp["visit14"].append(visit.isoformat())
        exp["seen"].append(seen.isoformat(timespec="seconds"))
        exp["clock"].append(clock.isoformat(timespec="seconds"))
        exp["double"].append(2 * (i + 1))
        exp["code"].append(repr(codes[i]) if isinstance(codes[i], float) else str(codes[i]))
        exp["y"].append(ys[i])
    # beside the table, further down: a formula without a stored value and
    # an error value, in columns of their own with their own header
    other = wb.create_sheet("Other")
    other.append(["site", "n"])
    other.append(["North", 3])
    other.append(["South", 4])
    path = os.path.join(out, "types.xlsx")
    wb.save(path)
    inject_cached(path, "xl/worksheets/sheet1.xml", cached)
    ref = {
        "_source": "testdata/reference/make_workbooks.py: the values given to openpyxl",
        "sheet": "Visits",
        "header": "B2",
        "numeric": {k: exp[k] for k in ["id", "age", "sbp", "double", "y"]},
        "smoker_numeric": [None if s is None else (1 if s else 0) for s in smokers],
        "categorical": {k: exp[k] for k in ["sex", "smoker", "visit", "visit14", "seen", "clock", "code"]},
        "lines": list(range(3, 11)),
        "other": {"site": ["North", "South"], "n": [3, 4]},
    }
    wb = openpyxl.Workbook()
    fixed_properties(wb)
    wb.epoch = CALENDAR_MAC_1904
    ws = wb.active
    ws.title = "Dates"
    ws.append(["when", "y"])
    days = [dt.date(1999, 12, 31), dt.date(2024, 2, 29), dt.date(2030, 6, 1)]
    for i, d in enumerate(days):
        ws.append([d, i % 2])
    wb.save(os.path.join(out, "dates1904.xlsx"))
    ref["dates1904"] = [d.isoformat() for d in days]
    with open(os.path.join(out, "types.json"), "w") as f:
        json.dump(ref, f, indent=1, sort_keys=True)
        f.write("\n")


def write_bad(out):
    """One sheet for each kind of bad cell; the Go tests name the cells."""
    wb = openpyxl.Workbook()
    fixed_properties(wb)
    ws = wb.active
    ws.title = "Visit data"
    ws.append(["id", "group", "score", "age"])
    for i in range(2, 30):
        ws.append([i, "a", i / 10, "abc" if i == 17 else 40 + i])
    ws = wb.create_sheet("errorvalue")
    ws.append(["id", "x"])
    ws.append([1, 2.5])
    ws.append([2, "#DIV/0!"])
    ws = wb.create_sheet("nocache")
    ws.append(["id", "x"])
    ws.append([1, 2.5])
    ws.append([2, 3.5])
    ws.append([3, "=B2+B3"])
    ws = wb.create_sheet("outside")
    ws.append(["id", "x", "g"])
    ws.append([1, 2.5, "a"])
    ws.append([2, 3.5, "b"])
    ws.append([3, 4.5, "a"])
    ws["E5"] = "a note"
    ws = wb.create_sheet("date")
    ws.append(["id", "x"])
    ws.append([1, 2.5])
    ws.append([2, dt.date(2024, 5, 1)])
    ws = wb.create_sheet("dups")
    ws.append(["id", "x", "id"])
    ws.append([1, 2, 3])
    wb.create_sheet("empty")
    ws = wb.create_sheet("headeronly")
    ws.append(["id", "x"])
    wb.save(os.path.join(out, "bad.xlsx"))


def write_workbooks(wdbc_rows):
    out = os.path.join(os.path.dirname(os.path.abspath(__file__)), "xlsx")
    os.makedirs(out, exist_ok=True)
    write_wdbc(out, wdbc_rows)
    write_types(out)
    write_bad(out)
