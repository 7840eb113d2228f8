"""Workbooks for the cohort package's workbook tests, written and read by
openpyxl (Debian's python3-openpyxl), a reader and writer independent of
riskaudit's.

  xlsx_openpyxl.py write DIR   writes DIR/read.xlsx (numbers, text in the
                               shared string table with rich-text runs and a
                               phonetic guide, dates, dates and times, times,
                               booleans, error values, empty cells; the header
                               at C3), DIR/read1904.xlsx (the same in the
                               1904 date system), DIR/append.xlsx (two
                               sheets, styles, merged cells, a styled empty
                               cell right of the header) and DIR/expected.json,
                               the values a reader must find, from the Python
                               values given to openpyxl
  xlsx_openpyxl.py dump FILE   prints every sheet of FILE as openpyxl reads
                               it: each cell with a value or a style (value,
                               number format, bold, fill colour), the merged
                               ranges and the dimension, as JSON

openpyxl writes text as inline strings; for the shared string table, the
text cells of one column are moved into xl/sharedStrings.xml after saving,
as Excel stores them.
"""
import datetime as dt
import html
import json
import math
import os
import random
import re
import sys
import zipfile
from decimal import Decimal
from xml.sax.saxutils import escape

import openpyxl
from openpyxl.styles import Font, PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.utils.datetime import CALENDAR_MAC_1904

ROWS = 40


def num_text(x):
    """A number as the reader writes it as text: the shortest decimal that
    reads back exactly, without an exponent from 1e-6 to 1e21."""
    if x == 0 or 1e-6 <= abs(x) < 1e21:
        s = format(Decimal(repr(x)), "f")
        return s.rstrip("0").rstrip(".") if "." in s else s
    return repr(x)


def columns(rng, early):
    """The columns of read.xlsx: (name, number format or None, values);
    early adds days before 1 March 1900 (which the 1904 system has not)."""
    # openpyxl writes 16 significant digits; 12 read back as given.
    nums = [float("%.12g" % rng.choice([rng.uniform(-1e3, 1e3), float(rng.randint(-50, 50)), rng.uniform(0, 1) * 1e-7, 1e22 * rng.random()]))
            for _ in range(ROWS)]
    words = ["North & South", "<east>", "Zürich", "東京", "a \"quoted\" one", "plain"]
    text = [rng.choice(words) for _ in range(ROWS)]
    days = [dt.date(1900, 1, 1), dt.date(1900, 2, 28), dt.date(1900, 3, 1), dt.date(1970, 1, 1), dt.date(2024, 2, 29)]
    dates = [rng.choice(days) if i < 5 and early else dt.date(1990, 1, 1) + dt.timedelta(days=rng.randint(0, 15000)) for i in range(ROWS)]
    stamps = [dt.datetime(2000, 1, 1) + dt.timedelta(seconds=rng.randint(0, 10 ** 9)) for _ in range(ROWS)]
    times = [dt.time(rng.randint(0, 23), rng.randint(0, 59), rng.randint(0, 59)) for _ in range(ROWS)]
    flags = [rng.choice([True, False]) for _ in range(ROWS)]
    errs = [rng.choice([1.5, 2.25, "#N/A"]) for _ in range(ROWS)]
    for col in (nums, text, stamps, flags):
        col[7] = None  # empty cells
    return [("num", None, nums), ("text", None, text), ("day", "yyyy-mm-dd", dates), ("day14", 14, dates),
            ("stamp", "yyyy-mm-dd hh:mm:ss", stamps), ("clock", "hh:mm:ss", times), ("flag", None, flags), ("err", None, errs)]


def expected(cols):
    """What a reader finds in each column: numbers, and text by row."""
    out = {"numeric": {}, "text": {}}
    for name, _, vals in cols:
        if name in ("num", "flag", "err"):
            out["numeric"][name] = [None if v is None or v == "#N/A" else float(v) for v in vals]
        if name == "num":
            out["text"][name] = [None if v is None else num_text(v) for v in vals]
        elif name == "text":
            out["text"][name] = vals
        elif name in ("day", "day14"):
            out["text"][name] = [v.isoformat() for v in vals]
        elif name == "stamp":
            out["text"][name] = [None if v is None else v.isoformat(timespec="seconds") for v in vals]
        elif name == "clock":
            out["text"][name] = [v.isoformat() for v in vals]
        elif name == "flag":
            out["text"][name] = [None if v is None else ("TRUE" if v else "FALSE") for v in vals]
    return out


def write_read(path, cols, epoch=None):
    wb = openpyxl.Workbook()
    if epoch is not None:
        wb.epoch = epoch
    ws = wb.active
    ws.title = "Data"
    ws["A1"] = None
    for j, (name, fmt, vals) in enumerate(cols):
        ws.cell(row=3, column=3 + j, value=name)
        for i, v in enumerate(vals):
            if v is None:
                continue
            c = ws.cell(row=4 + i, column=3 + j, value=v)
            if v == "#N/A":
                c.data_type = "e"
            if fmt == 14:
                c.number_format = openpyxl.styles.numbers.BUILTIN_FORMATS[14]
            elif fmt is not None:
                c.number_format = fmt
    wb.create_sheet("Other").append(["x"])
    wb.save(path)
    share_strings(path, get_column_letter(3 + [c[0] for c in cols].index("text")))


def share_strings(path, col):
    """Moves the inline strings of column col into a shared string table;
    every other item is written as rich-text runs, the first with a
    phonetic guide."""
    with zipfile.ZipFile(path) as z:
        parts = {n: z.read(n) for n in z.namelist()}
    sheet = parts["xl/worksheets/sheet1.xml"].decode()
    items = []

    def shared(m):
        text = html.unescape(m.group(2))
        items.append(text)
        return '<c r="%s" t="s"><v>%d</v></c>' % (m.group(1), len(items) - 1)

    sheet = re.sub(r'<c r="(%s(?:[4-9]|\d\d+))" t="inlineStr"><is><t>([^<]*)</t></is></c>' % col, shared, sheet)
    parts["xl/worksheets/sheet1.xml"] = sheet.encode()
    si = []
    for k, t in enumerate(items):
        if k % 2:
            half = len(t) // 2
            si.append('<si><r><rPr><b/></rPr><t xml:space="preserve">%s</t></r><r><t xml:space="preserve">%s</t></r>%s</si>'
                      % (escape(t[:half]), escape(t[half:]), "<rPh sb=\"0\" eb=\"1\"><t>ふりがな</t></rPh>" if k == 1 else ""))
        else:
            si.append("<si><t>%s</t></si>" % escape(t))
    parts["xl/sharedStrings.xml"] = ('<?xml version="1.0" encoding="UTF-8"?><sst xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" count="%d" uniqueCount="%d">%s</sst>'
                                     % (len(si), len(si), "".join(si))).encode()
    parts["[Content_Types].xml"] = parts["[Content_Types].xml"].replace(
        b"</Types>", b'<Override PartName="/xl/sharedStrings.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"/></Types>')
    parts["xl/_rels/workbook.xml.rels"] = parts["xl/_rels/workbook.xml.rels"].replace(
        b"</Relationships>", b'<Relationship Id="rIdSST" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/sharedStrings" Target="sharedStrings.xml"/></Relationships>')
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for n, b in parts.items():
            z.writestr(n, b)


def write_append(path):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Scores"
    bold, fill = Font(bold=True), PatternFill("solid", fgColor="FFCC00")
    for j, name in enumerate(["id", "x", "when"]):
        c = ws.cell(row=2, column=2 + j, value=name)
        c.font = bold
    ws.cell(row=2, column=5).fill = fill  # a styled empty cell where a column is added
    for i in range(ROWS):
        ws.cell(row=3 + i, column=2, value="p%03d" % i)
        c = ws.cell(row=3 + i, column=3, value=round(0.37 * i - 4, 2))
        c.number_format = "0.00"
        c = ws.cell(row=3 + i, column=4, value=dt.date(2024, 1, 1) + dt.timedelta(days=i))
        c.number_format = "dd/mm/yyyy"
    ws.cell(row=3 + 5, column=5).fill = fill  # a styled empty cell in a data row
    ws.column_dimensions["C"].width = 21
    notes = wb.create_sheet("Notes")
    notes["A1"] = "kept"
    notes["B2"] = 3.25
    notes["B2"].font = bold
    notes.merge_cells("A4:B5")
    wb.save(path)


def dump(path):
    wb = openpyxl.load_workbook(path)
    out = {}
    for ws in wb.worksheets:
        cells = {}
        for row in ws.iter_rows():
            for c in row:
                if c.value is None and not c.has_style:
                    continue
                v = c.value
                if isinstance(v, (dt.date, dt.datetime, dt.time)):
                    v = v.isoformat()
                elif isinstance(v, float) and not math.isfinite(v):
                    v = repr(v)
                cells[c.coordinate] = {"value": v, "format": c.number_format, "bold": bool(c.font.b),
                                       "fill": c.fill.fgColor.rgb if c.fill.fill_type else None}
        out[ws.title] = {"cells": cells, "merged": sorted(str(r) for r in ws.merged_cells.ranges),
                         "dimension": ws.dimensions, "widths": {k: d.width for k, d in ws.column_dimensions.items() if d.customWidth}}
    json.dump(out, sys.stdout, ensure_ascii=False, sort_keys=True)


def main():
    if sys.argv[1] == "dump":
        dump(sys.argv[2])
        return
    d = sys.argv[2]
    cols, cols1904 = columns(random.Random(15), True), columns(random.Random(16), False)
    write_read(os.path.join(d, "read.xlsx"), cols)
    write_read(os.path.join(d, "read1904.xlsx"), cols1904, CALENDAR_MAC_1904)
    write_append(os.path.join(d, "append.xlsx"))
    with open(os.path.join(d, "expected.json"), "w") as f:
        json.dump({"read.xlsx": expected(cols), "read1904.xlsx": expected(cols1904)}, f, ensure_ascii=False)


if __name__ == "__main__":
    main()
