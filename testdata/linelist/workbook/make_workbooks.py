#!/usr/bin/python3
"""Writes the workbook fixtures from cases.csv, with tools outside caseweave.

openpyxl builds each workbook: a "Notes" sheet first (no line-list columns, so caseweave
must pass it over), then a "Cases" sheet with two title rows above the header, dates as
date cells (serial numbers), and the report date of every other row as a formula on the
onset date (=C5+2 and so on, the same day the CSV gives). Cells whose CSV value is not a
date (W-06 "unknown", W-14 "2026-02-29") stay text. regions-1900.xlsx uses the 1900 date
system, regions-1904.xlsx the 1904 system. openpyxl writes no cached value for a formula,
so LibreOffice (headless) then opens and re-saves each workbook, which computes and stores
the formulas' values as a spreadsheet program would.

Run from this folder: /usr/bin/python3 make_workbooks.py (Debian's Python, which sees python3-openpyxl)
Made with Debian 12 packages python3-openpyxl 3.0.9 and libreoffice-calc-nogui 7.4.7.
"""
import csv
import datetime
import os
import shutil
import subprocess
import tempfile

import openpyxl
from openpyxl.utils.datetime import CALENDAR_MAC_1904

TITLE_ROWS = 2  # rows above the header on the Cases sheet


def as_date(s):
    try:
        return datetime.date.fromisoformat(s)
    except ValueError:
        return None


def build(path, epoch1904):
    with open("cases.csv", newline="") as f:
        rows = list(csv.reader(f))
    header, data = rows[0], rows[1:]
    wb = openpyxl.Workbook()
    if epoch1904:
        wb.epoch = CALENDAR_MAC_1904
    notes = wb.active
    notes.title = "Notes"
    notes["A1"] = "Invented line list for caseweave's tests (Vell estuary); no real person."
    notes["A2"] = "Exported 2026-02-20"
    ws = wb.create_sheet("Cases")
    ws.append(["Weekly line list, Vell estuary (invented)"])
    ws.append([])
    ws.append(header)
    onset_col = header.index("onset_date")
    report_col = header.index("report_date")
    for i, rec in enumerate(data):
        r = TITLE_ROWS + 2 + i  # spreadsheet row of this record
        ws.append([None] * len(header))
        for c, v in enumerate(rec):
            cell = ws.cell(row=r, column=c + 1)
            d = as_date(v) if c in (onset_col, report_col) else None
            if d is not None:
                onset = as_date(rec[onset_col])
                if c == report_col and i % 2 == 1 and onset is not None:
                    letter = openpyxl.utils.get_column_letter(onset_col + 1)
                    cell.value = "=%s%d+%d" % (letter, r, (d - onset).days)
                else:
                    cell.value = d
                cell.number_format = "yyyy-mm-dd"
            elif v != "":
                cell.value = v
    wb.save(path)


def main():
    tmp = tempfile.mkdtemp()
    try:
        for name, epoch1904 in (("regions-1900.xlsx", False), ("regions-1904.xlsx", True)):
            raw = os.path.join(tmp, name)
            build(raw, epoch1904)
            out = os.path.join(tmp, "out")
            subprocess.run(["soffice", "--headless", "--calc", "--convert-to",
                            "xlsx:Calc MS Excel 2007 XML", "--outdir", out, raw],
                           check=True, env=dict(os.environ, HOME=tmp))
            shutil.copy(os.path.join(out, name), name)
    finally:
        shutil.rmtree(tmp)


if __name__ == "__main__":
    main()
