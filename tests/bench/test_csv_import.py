"""The CSV import checks each cell as the reading serializer does, with its messages."""

from __future__ import annotations

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile

from shop.bench.csv_import import COLUMNS, parse_readings
from shop.bench.serializers import ReadingSerializer
from shop.core.errors import ApplicationError

HEADER = ",".join(COLUMNS) + "\n"
GOOD = {
    "source_v": "60",
    "source_point": "rig_output",
    "dial_pct": "",
    "load_v": "55",
    "current_a": "0.2",
    "glow": "dark",
    "behaviour": "",
    "held_s": "10",
    "bypassed": "no",
    "since_on_s": "",
}


def upload(rows: list[dict]) -> SimpleUploadedFile:
    lines = [",".join(row[column] for column in COLUMNS) for row in rows]
    text = HEADER + "".join(line + "\n" for line in lines)
    return SimpleUploadedFile("readings.csv", text.encode(), content_type="text/csv")


def serializer_says(cells: dict) -> tuple[str | None, str | None, dict | None]:
    """What one ReadingSerializer makes of the row: the first refused column and message."""
    data = {COLUMNS[c]: v.strip() for c, v in cells.items() if v.strip() and c != "bypassed"}
    data["lamp_bypassed"] = cells["bypassed"].strip().lower() in {"yes", "y", "true", "1"}
    serializer = ReadingSerializer(data=data)
    if serializer.is_valid():
        return None, None, dict(serializer.validated_data)
    field, messages = next(iter(serializer.errors.items()))
    column = next(c for c, f in COLUMNS.items() if f == field)
    return column, str(messages[0]), None


BAD_CELLS = [
    ("load_v", "fifty"),
    ("load_v", ""),
    ("load_v", "-1"),
    ("load_v", "1000.5"),
    ("load_v", "nan"),
    ("load_v", "inf"),
    ("load_v", "1e400"),
    ("load_v", "9" * 1001),
    ("source_v", "-0.1"),
    ("source_v", "abc"),
    ("dial_pct", "101"),
    ("current_a", "50.01"),
    ("current_a", "-inf"),
    ("glow", "blinding"),
    ("glow", ""),
    ("glow", "Dark"),
    ("behaviour", "wobbly"),
    ("held_s", "86401"),
    ("since_on_s", "x"),
    ("source_point", "at_the_wall"),
]


@pytest.mark.parametrize(("column", "value"), BAD_CELLS)
def test_a_bad_cell_gets_the_serializers_message_and_its_row_and_column(db, column, value):
    rows = [dict(GOOD), dict(GOOD, **{column: value})]
    expected_column, expected_message, _ = serializer_says(rows[1])
    assert expected_column is not None, "the serializer itself must refuse this cell"
    with pytest.raises(ApplicationError) as refused:
        parse_readings(upload(rows))
    assert refused.value.field == f"row 3.{expected_column}"
    assert refused.value.message == f"Row 3, column {expected_column}: {expected_message}"


def test_two_bad_cells_name_the_one_the_serializer_names_first(db):
    row = dict(GOOD, load_v="x", glow="blinding", source_v="-3")
    expected_column, _, _ = serializer_says(row)
    with pytest.raises(ApplicationError) as refused:
        parse_readings(upload([row]))
    assert refused.value.field == f"row 2.{expected_column}"


@pytest.mark.parametrize(
    "changes",
    [
        {},
        {"current_a": "", "held_s": "", "behaviour": "cycling"},
        {"source_v": "", "dial_pct": "50.5"},
        {"bypassed": "yes", "since_on_s": "0.25", "load_v": " 1e2 "},
        {"glow": "bright", "load_v": "0", "source_v": "1000"},
    ],
)
def test_good_rows_give_what_the_serializer_gives(db, changes):
    row = dict(GOOD, **changes)
    _, _, validated = serializer_says(row)
    assert parse_readings(upload([row])) == [validated]
