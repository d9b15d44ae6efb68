"""Readings from a CSV file with a header row; a bad row is named by number and column.

Columns (header names are ours; order is free; empty cells mean "not measured"):

=================  =====================================================  ========
column             meaning                                                required
=================  =====================================================  ========
source_v           source volts [V RMS]                                   one of
dial_pct           source dial setting [%], on a rig with its 100 % volts  these
source_point       where source_v was read: rig_output or before_rig      no
                   (default: where the rig's built-in meter reads)
load_v             unit volts [V RMS]                                     yes
current_a          current into the unit [A RMS]                          no
glow               dark, faint, dull, medium or bright                    yes
behaviour          steady, flash_then_dims or cycling (default steady)    no
held_s             seconds the step was held                              no
bypassed           yes/no: lamp switched out                              no
since_on_s         seconds since switch-on                                no
=================  =====================================================  ========
"""

from __future__ import annotations

import csv
import io

from django.conf import settings

from shop.core.errors import ApplicationError

from .serializers import ReadingSerializer

COLUMNS = {
    "source_v": "source_voltage",
    "dial_pct": "dial_percent",
    "source_point": "source_point",
    "load_v": "load_voltage",
    "current_a": "current",
    "glow": "glow_seen",
    "behaviour": "behaviour_seen",
    "held_s": "seconds_held",
    "bypassed": "lamp_bypassed",
    "since_on_s": "seconds_since_switch_on",
}
REQUIRED = {"load_v", "glow"}
YES = {"yes", "y", "true", "1"}
NO = {"no", "n", "false", "0", ""}


def max_bytes() -> int:
    """Largest CSV file accepted: the evidence upload limit."""
    return settings.EVIDENCE_MAX_BYTES


def _refuse(message: str, field: str = "file") -> ApplicationError:
    return ApplicationError(message, field=field, code="csv_invalid")


def _text(upload) -> str:
    raw = upload.read()
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise _refuse(
            f"The file is not UTF-8 text (bad byte at position {exc.start}). Save it "
            "as CSV UTF-8 and send it again."
        ) from exc


def parse_readings(upload) -> list[dict]:
    """Validate every row; return the readings as dicts, or raise naming the first bad row."""
    limit = settings.READINGS_CSV_MAX_ROWS
    reader = csv.DictReader(io.StringIO(_text(upload), newline=""))
    header = [name.strip().lower() for name in (reader.fieldnames or [])]
    if not header:
        raise _refuse("The file is empty: it needs a header row naming its columns.")
    unknown = [name for name in header if name not in COLUMNS]
    if unknown:
        raise _refuse(
            f"Unknown column(s) {', '.join(unknown)}. Known columns: {', '.join(COLUMNS)}."
        )
    missing = sorted(REQUIRED - set(header))
    if missing or not {"source_v", "dial_pct"} & set(header):
        needed = missing + ([] if {"source_v", "dial_pct"} & set(header) else ["source_v"])
        raise _refuse(
            f"The header row lacks {', '.join(needed)}. The first row must name the "
            f"columns; known columns: {', '.join(COLUMNS)}."
        )
    reader.fieldnames = header
    readings = []
    for row_number, row in enumerate(reader, start=2):
        if len(readings) >= limit:
            raise _refuse(f"The file has more than {limit} readings; split it.")
        if None in row:
            raise _refuse(f"Row {row_number} has more cells than the header has columns.")
        data = {}
        for column, value in row.items():
            value = (value or "").strip()
            if column == "bypassed":
                if value.lower() not in YES | NO:
                    raise _refuse(
                        f"Row {row_number}, column bypassed: say yes or no.",
                        field=f"row {row_number}.bypassed",
                    )
                data[COLUMNS[column]] = value.lower() in YES
            elif value != "":
                data[COLUMNS[column]] = value
        serializer = ReadingSerializer(data=data)
        if not serializer.is_valid():
            field, messages = next(iter(serializer.errors.items()))
            column = next((c for c, f in COLUMNS.items() if f == field), field)
            raise _refuse(
                f"Row {row_number}, column {column}: {messages[0]}",
                field=f"row {row_number}.{column}",
            )
        readings.append(dict(serializer.validated_data))
    if not readings:
        raise _refuse("The file has a header but no readings.")
    return readings
