#!/usr/bin/python3
"""Writes serials.csv: spreadsheet serial dates and the calendar dates openpyxl gives them,
a reference for caseweave's serialDate independent of excelize.

Serials 1 to 800 and every 997th after up to 2958465 (9999-12-31) in the 1900 date system,
except 60: openpyxl reads the nonexistent 1900-02-29 as 1900-02-28, caseweave rejects it.
Serials 1 to 800 and every 997th after up to 2957003 in the 1904 date system (openpyxl
gives serial 0 of that system as a bare time of day, so it is left out; 1904-01-01 is
checked by hand in the test).

Run from this folder: /usr/bin/python3 serials.py
Made with Debian 12's python3-openpyxl 3.0.9.
"""
import csv

from openpyxl.utils.datetime import CALENDAR_MAC_1904, CALENDAR_WINDOWS_1900, from_excel


def serials(last):
    return list(range(1, 801)) + list(range(801, last + 1, 997)) + [last]


with open("serials.csv", "w", newline="") as f:
    w = csv.writer(f, lineterminator="\n")
    w.writerow(["system", "serial", "date"])
    for n in serials(2958465):
        if n != 60:
            w.writerow(["1900", n, from_excel(n, CALENDAR_WINDOWS_1900).date().isoformat()])
    for n in serials(2958465 - 1462):
        w.writerow(["1904", n, from_excel(n, CALENDAR_MAC_1904).date().isoformat()])
