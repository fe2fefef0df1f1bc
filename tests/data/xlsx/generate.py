#!/usr/bin/env python3
"""Writes the spreadsheets the xlsx tests read (run by hand; the output is
committed, so that `make test` needs no Python).

Made with openpyxl (python3-openpyxl), a well-kept writer of ECMA-376
workbooks, from the examples' CSV files; plus hand-made workbooks whose XML
is written out below, for the cases a writer never produces on its own:
rich-text and phonetic shared strings, inline strings, a formula's cached
text, booleans, date formats (built-in and custom), an empty cell run, a
formula without a cached value, an error cell and merged header cells.

    /usr/bin/python3 tests/data/xlsx/generate.py
"""
import csv
import datetime
import os
import zipfile

import openpyxl

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.join(HERE, "..", "..", "..")
FIXED = datetime.datetime(2026, 1, 1)


def cell_value(text):
    """A CSV cell as the spreadsheet holds it: a number, a text or empty."""
    if text == "":
        return None
    try:
        number = float(text)
    except ValueError:
        return text
    return int(text) if text.lstrip("-").isdigit() else number


def save(workbook, name):
    workbook.properties.created = FIXED
    workbook.properties.modified = FIXED
    workbook.save(os.path.join(HERE, name))


def examples():
    for example in ("cylinders", "tablets", "parcels"):
        with open(os.path.join(ROOT, "examples", example, example + ".csv"), newline="") as f:
            rows = list(csv.reader(f))
        wb = openpyxl.Workbook()
        sheet = wb.active
        sheet.title = example
        for row in rows:
            sheet.append([rows[0][j] if row is rows[0] else cell_value(v)
                          for j, v in enumerate(row)])
        save(wb, example + ".xlsx")
    # The cylinders again, as the second sheet "Batch 12", under two title rows.
    with open(os.path.join(ROOT, "examples", "cylinders", "cylinders.csv"), newline="") as f:
        rows = list(csv.reader(f))
    wb = openpyxl.Workbook()
    wb.active.title = "Summary"
    wb.active.append(["see the sheet Batch 12"])
    sheet = wb.create_sheet("Batch 12")
    sheet.append(["Cylinder strength, batch 12"])
    sheet.append([])
    sheet.append(rows[0])
    for row in rows[1:]:
        sheet.append([cell_value(v) for v in row])
    save(wb, "batch12.xlsx")


def dates():
    """Dates as the spreadsheet stores them: serial numbers with a date format."""
    wb = openpyxl.Workbook()
    sheet = wb.active
    sheet.title = "runs"
    sheet.append(["batch_started", "temperature", "yield"])
    for started, temperature, yield_ in [
            ("2025-03-03", 20.5, 71.2), ("2025-03-01", 21.0, 70.1), ("2025-03-07", 19.5, 74.9),
            ("2025-03-10", 22.5, 77.0), ("2025-03-12", 20.0, 79.3), ("2025-03-15", 21.5, 81.8),
            ("2025-03-20", 23.0, 85.1)]:
        sheet.append([datetime.date.fromisoformat(started), temperature, yield_])
    for row in sheet.iter_rows(min_row=2, max_col=1):
        row[0].number_format = "yyyy-mm-dd"
    save(wb, "dates.xlsx")


CONTENT_TYPES = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">
<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>
<Default Extension="xml" ContentType="application/xml"/>
<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>
<Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>
<Override PartName="/xl/sharedStrings.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"/>
<Override PartName="/xl/styles.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.styles+xml"/>
</Types>"""
ROOT_RELS = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">
<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" Target="xl/workbook.xml"/>
</Relationships>"""
WORKBOOK = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships">
<sheets><sheet name="hand made" sheetId="1" r:id="rId1"/></sheets>
</workbook>"""
WORKBOOK_RELS = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">
<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet1.xml"/>
<Relationship Id="rId2" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/sharedStrings" Target="sharedStrings.xml"/>
<Relationship Id="rId3" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/styles" Target="styles.xml"/>
</Relationships>"""
# Style 0: general; 1: built-in date format 14; 2: custom "d mmm yyyy";
# 3: custom time of day "h:mm" (stays a number).
STYLES = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<styleSheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">
<numFmts count="2"><numFmt numFmtId="164" formatCode="d\\ mmm\\ yyyy"/><numFmt numFmtId="165" formatCode="h:mm"/></numFmts>
<cellStyleXfs count="1"><xf numFmtId="0"/></cellStyleXfs>
<cellXfs count="4"><xf numFmtId="0"/><xf numFmtId="14" applyNumberFormat="1"/><xf numFmtId="164" applyNumberFormat="1"/><xf numFmtId="165" applyNumberFormat="1"/></cellXfs>
</styleSheet>"""
# Shared strings: plain, rich text in runs, and a phonetic reading that is
# not part of the text.
SHARED = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<sst xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" count="6" uniqueCount="6">
<si><t>site</t></si>
<si><t>x</t></si>
<si><t>y</t></si>
<si><r><rPr><b/></rPr><t>north</t></r><r><t xml:space="preserve"> ridge</t></r></si>
<si><t>south</t><rPh sb="0" eb="1"><t>SOUTH-READING</t></rPh></si>
<si><t>when</t></si>
</sst>"""


def sheet_xml(rows, extra=""):
    return ("""<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"><sheetData>"""
            + "".join(rows) + "</sheetData>" + extra + "</worksheet>")


def hand_made(name, rows, extra=""):
    path = os.path.join(HERE, name)
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for part, text in [("[Content_Types].xml", CONTENT_TYPES), ("_rels/.rels", ROOT_RELS),
                           ("xl/workbook.xml", WORKBOOK),
                           ("xl/_rels/workbook.xml.rels", WORKBOOK_RELS),
                           ("xl/styles.xml", STYLES), ("xl/sharedStrings.xml", SHARED),
                           ("xl/worksheets/sheet1.xml", sheet_xml(rows, extra))]:
            info = zipfile.ZipInfo(part, date_time=(2026, 1, 1, 0, 0, 0))
            z.writestr(info, text, zipfile.ZIP_DEFLATED)


HEADER = ('<row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1" t="s"><v>1</v></c>'
          '<c r="C1" t="s"><v>2</v></c><c r="D1" t="s"><v>5</v></c></row>')


def edge_cases():
    rows = [HEADER,
            # shared strings (rich text, phonetic), a date in format 14
            '<row r="2"><c r="A2" t="s"><v>3</v></c><c r="B2"><v>1</v></c>'
            '<c r="C2"><v>2.5</v></c><c r="D2" s="1"><v>45717</v></c></row>',
            # an inline string, a formula with its cached number, a custom date format
            '<row r="3"><c r="A3" t="inlineStr"><is><t>east</t></is></c><c r="B3"><v>2</v></c>'
            '<c r="C3"><f>B3*2+0.4</f><v>4.4</v></c><c r="D3" s="2"><v>45718</v></c></row>',
            # a formula's cached text, and an empty cell run (B and C absent): missing
            '<row r="5"><c r="A5" t="str"><f>"we"&amp;"st"</f><v>west</v></c>'
            '<c r="D5" s="1"><v>45719</v></c></row>',
            # a row of styles only: skipped, as a blank line of a file is
            '<row r="6"><c r="A6" s="1"/><c r="B6" s="1"/></row>',
            '<row r="7"><c r="A7" t="s"><v>4</v></c><c r="B7"><v>4</v></c>'
            '<c r="C7"><v>8.1</v></c><c r="D7" s="1"><v>45720.5</v></c></row>',
            '<row r="8"><c r="A8" t="s"><v>3</v></c><c r="B8"><v>5</v></c>'
            '<c r="C8"><v>10.2</v></c><c r="D8" s="1"><v>45721</v></c></row>']
    hand_made("edge-cases.xlsx", rows)
    # The same rows without the date-time, read with cells as booleans too.
    hand_made("formula-without-value.xlsx",
              [HEADER, '<row r="2"><c r="A2" t="s"><v>3</v></c><c r="B2"><v>1</v></c>'
                       '<c r="C2"><f>B2*2</f></c></row>'])
    hand_made("error-cell.xlsx",
              [HEADER, '<row r="2"><c r="A2" t="s"><v>3</v></c><c r="B2"><v>1</v></c>'
                       '<c r="C2"><v>2</v></c></row>',
               '<row r="3"><c r="A3" t="s"><v>4</v></c><c r="B3"><v>2</v></c>'
               '<c r="C3" t="e"><f>1/0</f><v>#DIV/0!</v></c></row>'])
    hand_made("merged-header.xlsx",
              ['<row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1" t="s"><v>1</v></c>'
               '<c r="C1"/></row>',
               '<row r="2"><c r="A2" t="s"><v>3</v></c><c r="B2"><v>1</v></c>'
               '<c r="C2"><v>2</v></c></row>'],
              '<mergeCells count="1"><mergeCell ref="B1:C1"/></mergeCells>')
    hand_made("outside-cell.xlsx",
              [HEADER, '<row r="2"><c r="A2" t="s"><v>3</v></c><c r="B2"><v>1</v></c>'
                       '<c r="C2"><v>2</v></c><c r="F2" t="inlineStr"><is><t>note</t></is></c></row>'])


if __name__ == "__main__":
    examples()
    dates()
    edge_cases()
