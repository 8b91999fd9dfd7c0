"""Writes the workbook fixtures of the tests (invented data, fixed seed).

Scenario (invented): cumulative members of the fictional Thistlecombe tool
library, counted on the first of each month, a logistic with K = 4800,
r = 0.35 per month and the midpoint 14 months after January 2022, plus
rounded normal noise (sd 40) from random.Random(20261205); and the same
library's quarterly totals (every third month of the same curve).

Run from the workspace root with openpyxl, odfpy, xlwt and msoffcrypto-tool installed
(versions in requirements.txt):

    python tests/workbooks/make_workbooks.py

Files written beside this script:
  members.xlsx    sheets "Blank" (empty), "Members" (date cells, values),
                  "Quarterly" (quarter-start date cells, values)
  members.ods     the same three sheets (OpenDocument date cells)
  members.xls     the same three sheets (Excel 97 BIFF8, date-formatted cells)
  formulas.xlsx   "Members" with a value column of formulas whose values
                  were never calculated (openpyxl does not calculate)
  truncated.xlsx  the first half of members.xlsx's bytes (a damaged file)
  encrypted.xlsx  members.xlsx protected with the password "thistle"
                  (msoffcrypto-tool, ECMA-376 agile encryption)
  members.csv     the "Members" sheet as CSV, the reference the tests
                  compare the workbooks with
"""

import datetime as dt
import math
import os
import random

HERE = os.path.dirname(os.path.abspath(__file__))
SEED = 20261205
K, R, T0 = 4800.0, 0.35, 14.0


def series():
    rng = random.Random(SEED)
    rows = []
    for m in range(36):
        date = dt.date(2022 + m // 12, m % 12 + 1, 1)
        y = K / (1.0 + math.exp(-R * (m - T0))) + rng.gauss(0.0, 40.0)
        rows.append((date, max(0, round(y))))
    return rows


def quarterly(rows):
    return [r for i, r in enumerate(rows) if i % 3 == 0]


def write_xlsx(rows, path, formulas=False):
    from openpyxl import Workbook

    wb = Workbook()
    blank = wb.active
    blank.title = "Blank"
    ws = wb.create_sheet("Members")
    ws.append(["month", "members"])
    for i, (d, y) in enumerate(rows):
        if formulas:
            # The value as a formula of a helper column: no saved value.
            ws.append([d, f"=C{i + 2}*1", y])
        else:
            ws.append([d, y])
        ws.cell(row=i + 2, column=1).number_format = "yyyy-mm-dd"
    if not formulas:
        q = wb.create_sheet("Quarterly")
        q.append(["quarter", "members"])
        for i, (d, y) in enumerate(quarterly(rows)):
            q.append([d, y])
            q.cell(row=i + 2, column=1).number_format = "yyyy-mm-dd"
    # Fixed document times, so the bytes depend on the seed only.
    fixed = dt.datetime(2026, 1, 1)
    wb.properties.created = fixed
    wb.properties.modified = fixed
    wb.save(path)


def write_ods(rows, path):
    from odf.opendocument import OpenDocumentSpreadsheet
    from odf.table import Table, TableCell, TableRow
    from odf.text import P

    doc = OpenDocumentSpreadsheet()

    def text_cell(s):
        c = TableCell(valuetype="string")
        c.addElement(P(text=s))
        return c

    def date_cell(d):
        c = TableCell(valuetype="date", datevalue=d.isoformat())
        c.addElement(P(text=d.isoformat()))
        return c

    def number_cell(y):
        c = TableCell(valuetype="float", value=str(y))
        c.addElement(P(text=str(y)))
        return c

    doc.spreadsheet.addElement(Table(name="Blank"))
    for name, head, data in (
        ("Members", "month", rows),
        ("Quarterly", "quarter", quarterly(rows)),
    ):
        t = Table(name=name)
        tr = TableRow()
        tr.addElement(text_cell(head))
        tr.addElement(text_cell("members"))
        t.addElement(tr)
        for d, y in data:
            tr = TableRow()
            tr.addElement(date_cell(d))
            tr.addElement(number_cell(y))
            t.addElement(tr)
        doc.spreadsheet.addElement(t)
    doc.save(path)


def write_xls(rows, path):
    import xlwt

    wb = xlwt.Workbook()
    wb.add_sheet("Blank")
    style = xlwt.easyxf(num_format_str="YYYY-MM-DD")
    for name, head, data in (
        ("Members", "month", rows),
        ("Quarterly", "quarter", quarterly(rows)),
    ):
        ws = wb.add_sheet(name)
        ws.write(0, 0, head)
        ws.write(0, 1, "members")
        for i, (d, y) in enumerate(data):
            ws.write(i + 1, 0, d, style)
            ws.write(i + 1, 1, y)
    wb.save(path)


def main():
    rows = series()
    with open(os.path.join(HERE, "members.csv"), "w", newline="") as f:
        f.write("month,members\n")
        for d, y in rows:
            f.write(f"{d.isoformat()},{y}\n")
    write_xlsx(rows, os.path.join(HERE, "members.xlsx"))
    write_xlsx(rows, os.path.join(HERE, "formulas.xlsx"), formulas=True)
    write_ods(rows, os.path.join(HERE, "members.ods"))
    write_xls(rows, os.path.join(HERE, "members.xls"))
    with open(os.path.join(HERE, "members.xlsx"), "rb") as f:
        data = f.read()
    with open(os.path.join(HERE, "truncated.xlsx"), "wb") as f:
        f.write(data[: len(data) // 2])
    write_encrypted(os.path.join(HERE, "members.xlsx"), os.path.join(HERE, "encrypted.xlsx"))


def write_encrypted(src, dst):
    from msoffcrypto.format.ooxml import OOXMLFile

    with open(src, "rb") as plain, open(dst, "wb") as out:
        OOXMLFile(plain).encrypt("thistle", out)


if __name__ == "__main__":
    main()
