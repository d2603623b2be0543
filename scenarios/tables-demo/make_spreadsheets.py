#!/usr/bin/env python3
"""Writes demand.xlsx and demand.ods (sheet "Demand") from demand.csv.

The tables demo reads its demand from a spreadsheet, as a planner's
workbook would hold it; this script makes the two small files with the
Python standard library alone (no office program, no spreadsheet package),
with fixed timestamps so that running it again gives the same bytes.
Run it from anywhere: python3 scenarios/tables-demo/make_spreadsheets.py
"""
import csv
import os
import zipfile
from xml.sax.saxutils import escape

HERE = os.path.dirname(os.path.abspath(__file__))
SHEET = "Demand"
FIXED = (1980, 1, 1, 0, 0, 0)


def rows():
    with open(os.path.join(HERE, "demand.csv"), newline="", encoding="utf-8") as f:
        return [r for r in csv.reader(f) if r]


def is_number(text):
    try:
        float(text)
        return True
    except ValueError:
        return False


def put(z, name, data, stored=False):
    info = zipfile.ZipInfo(name, FIXED)
    info.compress_type = zipfile.ZIP_STORED if stored else zipfile.ZIP_DEFLATED
    z.writestr(info, data)


def column_letter(i):
    return "ABCDEFGHIJKLMNOPQRSTUVWXYZ"[i]


def xlsx(path, table):
    sheet_rows = []
    for r, row in enumerate(table, start=1):
        cells = []
        for c, v in enumerate(row):
            ref = f"{column_letter(c)}{r}"
            if is_number(v):
                cells.append(f'<c r="{ref}"><v>{v}</v></c>')
            else:
                cells.append(f'<c r="{ref}" t="inlineStr"><is><t>{escape(v)}</t></is></c>')
        sheet_rows.append(f'<row r="{r}">{"".join(cells)}</row>')
    ns = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"'
    rel = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
    with zipfile.ZipFile(path, "w") as z:
        put(z, "[Content_Types].xml",
            '<?xml version="1.0" encoding="UTF-8"?>'
            '<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
            '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
            '<Default Extension="xml" ContentType="application/xml"/>'
            '<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>'
            '<Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>'
            '</Types>')
        put(z, "_rels/.rels",
            '<?xml version="1.0" encoding="UTF-8"?>'
            '<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
            f'<Relationship Id="rId1" Type="{rel}/officeDocument" Target="xl/workbook.xml"/>'
            '</Relationships>')
        put(z, "xl/workbook.xml",
            f'<?xml version="1.0" encoding="UTF-8"?><workbook {ns} xmlns:r="{rel}">'
            f'<sheets><sheet name="{SHEET}" sheetId="1" r:id="rId1"/></sheets></workbook>')
        put(z, "xl/_rels/workbook.xml.rels",
            '<?xml version="1.0" encoding="UTF-8"?>'
            '<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
            f'<Relationship Id="rId1" Type="{rel}/worksheet" Target="worksheets/sheet1.xml"/>'
            '</Relationships>')
        put(z, "xl/worksheets/sheet1.xml",
            f'<?xml version="1.0" encoding="UTF-8"?><worksheet {ns}><sheetData>'
            + "".join(sheet_rows) + "</sheetData></worksheet>")


def ods(path, table):
    body = []
    for row in table:
        cells = []
        for v in row:
            if is_number(v):
                cells.append(f'<table:table-cell office:value-type="float" office:value="{v}"><text:p>{v}</text:p></table:table-cell>')
            else:
                cells.append(f'<table:table-cell office:value-type="string"><text:p>{escape(v)}</text:p></table:table-cell>')
        body.append(f'<table:table-row>{"".join(cells)}</table:table-row>')
    office = "urn:oasis:names:tc:opendocument:xmlns:office:1.0"
    with zipfile.ZipFile(path, "w") as z:
        # The ODF package rule: `mimetype` first, not compressed.
        put(z, "mimetype", "application/vnd.oasis.opendocument.spreadsheet", stored=True)
        put(z, "META-INF/manifest.xml",
            '<?xml version="1.0" encoding="UTF-8"?>'
            '<manifest:manifest xmlns:manifest="urn:oasis:names:tc:opendocument:xmlns:manifest:1.0" manifest:version="1.2">'
            '<manifest:file-entry manifest:full-path="/" manifest:media-type="application/vnd.oasis.opendocument.spreadsheet"/>'
            '<manifest:file-entry manifest:full-path="content.xml" manifest:media-type="text/xml"/>'
            '</manifest:manifest>')
        put(z, "content.xml",
            f'<?xml version="1.0" encoding="UTF-8"?><office:document-content xmlns:office="{office}" '
            'xmlns:table="urn:oasis:names:tc:opendocument:xmlns:table:1.0" '
            'xmlns:text="urn:oasis:names:tc:opendocument:xmlns:text:1.0" office:version="1.2">'
            f'<office:body><office:spreadsheet><table:table table:name="{SHEET}">'
            + "".join(body) + "</table:table></office:spreadsheet></office:body></office:document-content>")


if __name__ == "__main__":
    t = rows()
    xlsx(os.path.join(HERE, "demand.xlsx"), t)
    ods(os.path.join(HERE, "demand.ods"), t)
