#!/usr/bin/env python3
"""Writes the test workbooks of xlsx_test with openpyxl (python3-openpyxl), a
general-purpose spreadsheet library, from the invented demo exports: each workbook holds the
cells of a text export (numbers as numbers, text as text), so the text export is its twin.

usage: make_workbooks.py SOURCE_DIR OUT_DIR [SHEET_SEED_DIR]
(with SHEET_SEED_DIR, also the first sheet of each as XML with inline strings: fuzzing seeds)
"""
import csv
import datetime
import os
import re
import sys
import zipfile

import openpyxl


def cell_value(text):
    """A field of a text export as a spreadsheet holds it: a number when it reads as one."""
    try:
        return int(text) if re.fullmatch(r"-?\d+", text) else float(text)
    except ValueError:
        return text


def rows_of(path, delimiter):
    with open(path, newline="", encoding="utf-8") as f:
        return list(csv.reader(f, delimiter=delimiter))


def write_rows(ws, rows, convert=cell_value):
    for r, row in enumerate(rows, start=1):
        for c, text in enumerate(row, start=1):
            if text != "":
                ws.cell(row=r, column=c, value=convert(text))


def book_of(rows, path, title="Sheet1"):
    wb = openpyxl.Workbook()
    wb.active.title = title
    write_rows(wb.active, rows)
    wb.save(path)


def clock(seconds):
    return datetime.time(seconds // 3600, seconds // 60 % 60, seconds % 60)


def timed_wide(rows, out):
    """The wide export with its times as h:mm:ss times, and the CSV with the same clock text."""
    header = next(i for i, r in enumerate(rows) if r and r[0].startswith("Time"))
    wb = openpyxl.Workbook()
    ws = wb.active
    twin = []
    for r, row in enumerate(rows, start=1):
        timed = r - 1 > header and row and row[0] != ""
        for c, text in enumerate(row, start=1):
            if text == "":
                continue
            if timed and c == 1:
                cell = ws.cell(row=r, column=c, value=clock(int(text)))
                cell.number_format = "h:mm:ss"
            else:
                ws.cell(row=r, column=c, value=cell_value(text))
        twin.append([clock(int(row[0])).strftime("%-H:%M:%S")] + row[1:] if timed else row)
    ws.cell(row=header + 1, column=1, value="Time")
    twin[header][0] = "Time"
    wb.save(os.path.join(out, "wide_clock.xlsx"))
    with open(os.path.join(out, "wide_clock.csv"), "w", newline="", encoding="utf-8") as f:
        csv.writer(f, lineterminator="\n").writerows(twin)


def errors_wide(rows, out):
    """The wide export with two reads replaced by cell errors (#N/A in A3, #DIV/0! in B5)."""
    header = next(i for i, r in enumerate(rows) if r and r[0].startswith("Time"))
    rows = [list(r) for r in rows]
    rows[header + 4][rows[header].index("A3")] = "#N/A"
    rows[header + 6][rows[header].index("B5")] = "#DIV/0!"
    book_of(rows, os.path.join(out, "wide_errors.xlsx"))


def two_sheets(rows, out):
    wb = openpyxl.Workbook()
    wb.active.title = "Notes"
    wb.active["A1"] = "invented demo plate; the reads are on the sheet Plate"
    write_rows(wb.create_sheet("Plate"), rows)
    wb.save(os.path.join(out, "two_sheets.xlsx"))


def bad_value(rows, out):
    """The wide export with the text 'n.d.' as the value of well A3 at the fourth read."""
    header = next(i for i, r in enumerate(rows) if r and r[0].startswith("Time"))
    rows = [list(r) for r in rows]
    rows[header + 4][rows[header].index("A3")] = "n.d."
    book_of(rows, os.path.join(out, "wide_bad_value.xlsx"))


def kinds(out):
    """One cell of each kind, with openpyxl's default formats for dates, date-times and times."""
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append([datetime.date(2026, 11, 30), datetime.datetime(2026, 11, 30, 10, 15, 0),
               datetime.time(0, 0, 20, 500000), True, 1e-05, "a,b", 'say "hi"', "#N/A", 0.1])
    ws.cell(row=3, column=2, value="after a gap")
    wb.save(os.path.join(out, "kinds.xlsx"))


def rich_text(src, out):
    """The wide workbook with the header cell "Time [s]" as rich text runs plus a phonetic
    guide (ECMA-376 Part 1, 18.4.4 and 18.4.6), which is not part of the text."""
    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as zout:
        for item in zin.infolist():
            data = zin.read(item.filename)
            if item.filename == "xl/sharedStrings.xml":
                plain = b"<si><t>Time [s]</t></si>"
                assert plain in data
                data = data.replace(plain, b'<si><r><t xml:space="preserve">Time </t></r><r><rPr><b/></rPr>'
                                           b'<t>[s]</t></r><rPh sb="0" eb="4"><t>x</t></rPh></si>')
            zout.writestr(item, data)


def stored(src, out):
    """The same workbook with its parts stored uncompressed (zip method 0), as some writers do;
    also a fuzzing seed whose XML a mutation reaches directly."""
    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(out, "w", zipfile.ZIP_STORED) as zout:
        for item in zin.infolist():
            data = zin.read(item.filename)
            item.compress_type = zipfile.ZIP_STORED
            zout.writestr(item, data)


def sheet_seeds(out, seeds):
    """Each workbook's first sheet as XML with its shared strings written inline (t="inlineStr"),
    for the fuzzer's sheet mode, which has no shared strings of the workbook."""
    os.makedirs(seeds, exist_ok=True)
    for name in sorted(os.listdir(out)):
        if not name.endswith(".xlsx"):
            continue
        with zipfile.ZipFile(os.path.join(out, name)) as z:
            shared = z.read("xl/sharedStrings.xml") if "xl/sharedStrings.xml" in z.namelist() else b""
            strings = [b"".join(re.findall(rb"<t[^>]*>(.*?)</t>", si, re.S))
                       for si in re.findall(rb"<si>(.*?)</si>", shared, re.S)]
            sheet = z.read("xl/worksheets/sheet1.xml")
        inline = re.sub(rb'<c r="([A-Z]+[0-9]+)"([^>]*) t="s"><v>([0-9]+)</v></c>',
                        lambda m: b'<c r="' + m.group(1) + m.group(2) + b'" t="inlineStr"><is><t>' +
                        strings[int(m.group(3))] + b"</t></is></c>", sheet)
        with open(os.path.join(seeds, name[:-5] + ".sheet.xml"), "wb") as f:
            f.write(inline)


def main():
    source, out = sys.argv[1], sys.argv[2]
    os.makedirs(out, exist_ok=True)
    demo = os.path.join(source, "demo-data")
    wide = rows_of(os.path.join(demo, "hydrolase_wide.csv"), ",")
    book_of(wide, os.path.join(out, "wide.xlsx"))
    book_of(rows_of(os.path.join(demo, "hydrolase_grid.txt"), "\t"), os.path.join(out, "grid.xlsx"))
    book_of(rows_of(os.path.join(demo, "hydrolase_long.csv"), ","), os.path.join(out, "long.xlsx"))
    timed_wide(wide, out)
    errors_wide(wide, out)
    two_sheets(wide, out)
    bad_value(wide, out)
    kinds(out)
    stored(os.path.join(out, "wide.xlsx"), os.path.join(out, "wide_stored.xlsx"))
    stored(os.path.join(out, "kinds.xlsx"), os.path.join(out, "kinds_stored.xlsx"))
    rich_text(os.path.join(out, "wide.xlsx"), os.path.join(out, "wide_rich.xlsx"))
    if len(sys.argv) > 3:
        sheet_seeds(out, sys.argv[3])


if __name__ == "__main__":
    main()
