"""Writes the .xlsx inputs of two bad-input cases, with the standard
library only (CI machines have python3 but no spreadsheet packages).

Run from the repository root: python3 tests/bad_inputs/make_workbooks.py
The workbooks are committed; regenerate them with this script rather than
editing them.

A workbook is a zip of XML parts (Office Open XML, ECMA-376 Part 1). Only
the parts a reader needs are written: the content types, the package and
workbook relationships, the workbook, one part per sheet and, for date
cells, a style sheet whose second cell format uses the built-in number
format 14 (a short date). Text cells are inline strings.
"""
from pathlib import Path
from xml.sax.saxutils import escape
import zipfile

HERE = Path(__file__).parent
# Fixed timestamps keep the files byte-identical from run to run.
STAMP = (2026, 11, 30, 0, 0, 0)


def col(i):
    s = ""
    i += 1
    while i:
        i, r = divmod(i - 1, 26)
        s = chr(65 + r) + s
    return s


def cell(ref, v):
    if v is None:
        return ""
    if isinstance(v, tuple) and v[0] == "date":
        # An Excel serial day number shown with the date format (style 1).
        return f'<c r="{ref}" s="1"><v>{v[1]}</v></c>'
    if isinstance(v, (int, float)):
        return f'<c r="{ref}"><v>{v}</v></c>'
    return f'<c r="{ref}" t="inlineStr"><is><t>{escape(v)}</t></is></c>'


def sheet_xml(rows):
    body = []
    for r, row in enumerate(rows, start=1):
        cells = "".join(cell(f"{col(c)}{r}", v) for c, v in enumerate(row))
        body.append(f'<row r="{r}">{cells}</row>')
    return (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>'
        '<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
        f'<sheetData>{"".join(body)}</sheetData></worksheet>'
    )


def write(path, sheets):
    """sheets: list of (name, rows)."""
    ct = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>'
        '<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
        '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
        '<Default Extension="xml" ContentType="application/xml"/>'
        '<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>'
        '<Override PartName="/xl/styles.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.styles+xml"/>'
        + "".join(
            f'<Override PartName="/xl/worksheets/sheet{i}.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>'
            for i in range(1, len(sheets) + 1)
        )
        + "</Types>"
    )
    rels = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>'
        '<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
        '<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" Target="xl/workbook.xml"/>'
        "</Relationships>"
    )
    wb = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>'
        '<workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" '
        'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets>'
        + "".join(
            f'<sheet name="{escape(n)}" sheetId="{i}" r:id="rId{i}"/>'
            for i, (n, _) in enumerate(sheets, start=1)
        )
        + "</sheets></workbook>"
    )
    wb_rels = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>'
        '<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
        + "".join(
            f'<Relationship Id="rId{i}" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet{i}.xml"/>'
            for i in range(1, len(sheets) + 1)
        )
        + f'<Relationship Id="rId{len(sheets) + 1}" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/styles" Target="styles.xml"/>'
        "</Relationships>"
    )
    styles = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>'
        '<styleSheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
        '<fonts count="1"><font/></fonts><fills count="1"><fill/></fills>'
        '<borders count="1"><border/></borders>'
        '<cellStyleXfs count="1"><xf numFmtId="0"/></cellStyleXfs>'
        '<cellXfs count="2"><xf numFmtId="0" xfId="0"/>'
        '<xf numFmtId="14" xfId="0" applyNumberFormat="1"/></cellXfs>'
        "</styleSheet>"
    )
    parts = [
        ("[Content_Types].xml", ct),
        ("_rels/.rels", rels),
        ("xl/workbook.xml", wb),
        ("xl/_rels/workbook.xml.rels", wb_rels),
        ("xl/styles.xml", styles),
    ] + [(f"xl/worksheets/sheet{i}.xml", sheet_xml(rows)) for i, (_, rows) in enumerate(sheets, start=1)]
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        for name, text in parts:
            z.writestr(zipfile.ZipInfo(name, STAMP), text)


def main():
    # An export whose first sheet is a note; the baskets are on the second.
    write(
        HERE / "data-xlsx-on-second-sheet" / "baskets.xlsx",
        [
            ("Export info", [("Exported from the till on 2026-11-30",), ("Invented demo data",)]),
            (
                "Baskets",
                [("layout", "basket_eur")]
                + [("new" if i % 2 else "old", 20 + i) for i in range(12)],
            ),
        ],
    )
    # Bag weights, one of which the spreadsheet shows as a date
    # (serial 43831 is 2020-01-01 in the 1900 date system).
    rows = [("scale", "bag_kg")] + [("left" if i % 2 else "right", 24.5 + i / 10) for i in range(10)]
    rows[6] = ("right", ("date", 43831))
    write(HERE / "data-xlsx-date-in-numeric-column" / "bags.xlsx", [("Bags", rows)])


if __name__ == "__main__":
    main()
