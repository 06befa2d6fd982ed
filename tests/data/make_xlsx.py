"""Writes the workbook fixtures used by tests/data_inputs.rs.

Run from the repository root: python3 tests/data/make_xlsx.py
(needs openpyxl). The generated files are committed; regenerate them with
this script rather than editing them by hand.
"""
from pathlib import Path

from openpyxl import Workbook

HERE = Path(__file__).parent


def bakes():
    wb = Workbook()
    notes = wb.active
    notes.title = "Notes"
    notes["A1"] = "Invented bakery trial; the data are on the sheet Bakes."
    bakes = wb.create_sheet("Bakes")
    rows = [
        ("proof", "volume_ml"),
        ("long", 812.5),        # numeric cell (float)
        ("standard", 780),      # numeric cell (integer)
        ("long", "799.5"),      # number stored as text
        ("standard", " 790.25 "),  # text with spaces around it
        ("long", None),         # empty cell: missing
        ("standard", "NA"),     # missing text
        ("rye", 640),           # a third level, ignored
    ]
    for r in rows:
        bakes.append(r)
    # A table that starts at C3, to check that positions are spreadsheet positions.
    shifted = wb.create_sheet("Shifted")
    for i, r in enumerate([("proof", "volume_ml"), ("long", 1.0), ("standard", "12x")]):
        shifted.cell(row=3 + i, column=3, value=r[0])
        shifted.cell(row=3 + i, column=4, value=r[1])
    wb.save(HERE / "bakes.xlsx")


if __name__ == "__main__":
    bakes()
