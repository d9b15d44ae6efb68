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
import math

from django.conf import settings
from django.core.validators import MaxValueValidator, MinValueValidator
from rest_framework import serializers
from rest_framework.fields import SkipField, empty

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
    cells = _CellRules([COLUMNS[column] for column in header if column != "bypassed"])
    readings = []
    for row_number, row in enumerate(reader, start=2):
        if len(readings) >= limit:
            raise _refuse(f"The file has more than {limit} readings; split it.")
        if None in row:
            raise _refuse(f"Row {row_number} has more cells than the header has columns.")
        bypassed = (row.get("bypassed") or "").strip().lower()
        if bypassed not in YES | NO:
            raise _refuse(
                f"Row {row_number}, column bypassed: say yes or no.",
                field=f"row {row_number}.bypassed",
            )
        reading, field, message = cells.validate(row)
        if field is not None:
            column = next((c for c, f in COLUMNS.items() if f == field), field)
            raise _refuse(
                f"Row {row_number}, column {column}: {message}",
                field=f"row {row_number}.{column}",
            )
        reading["lamp_bypassed"] = bypassed in YES
        readings.append(reading)
    if not readings:
        raise _refuse("The file has a header but no readings.")
    return readings


class _CellRules:
    """A row's cells checked by the fields of one `ReadingSerializer`, built once per file.

    A number inside its field's limits, or a listed choice, is taken as the field would take
    it; anything else (and an empty required cell) goes through the field's own validation,
    so every refusal carries the serializer's message. The rows are checked in the
    serializer's field order, so the first refusal named is the one it would name.
    """

    def __init__(self, present: list[str]):
        fields = ReadingSerializer().fields
        self.fields = [
            field
            for name, field in fields.items()
            if not field.read_only and name in set(COLUMNS.values()) and name != "lamp_bypassed"
        ]
        self.present = {field.field_name: field.field_name in present for field in self.fields}
        self.quick = {}
        # What an empty cell gives: the field's default, nothing, or its refusal (same each row).
        self.when_empty = {}
        for field in self.fields:
            try:
                self.when_empty[field.field_name] = (field.run_validation(empty), None)
            except SkipField:
                self.when_empty[field.field_name] = (_UNSURE, None)
            except serializers.ValidationError as exc:
                self.when_empty[field.field_name] = (_UNSURE, exc.detail[0])
        for field in self.fields:
            if isinstance(field, serializers.ChoiceField):
                self.quick[field.field_name] = self._choice(field)
            elif isinstance(field, serializers.FloatField) and all(
                isinstance(rule, MinValueValidator | MaxValueValidator) for rule in field.validators
            ):
                self.quick[field.field_name] = self._number(field)

    @staticmethod
    def _choice(field):
        values = field.choice_strings_to_values
        return lambda text: values.get(text, _UNSURE)

    @staticmethod
    def _number(field):
        low = -math.inf if field.min_value is None else field.min_value
        high = math.inf if field.max_value is None else field.max_value
        longest = field.MAX_STRING_LENGTH

        def number(text):
            if len(text) > longest:
                return _UNSURE
            try:
                value = float(text)
            except ValueError:
                return _UNSURE
            return value if math.isfinite(value) and low <= value <= high else _UNSURE

        return number

    def validate(self, row: dict) -> tuple[dict, str | None, str | None]:
        """The row's reading, or the first field refused and the serializer's message."""
        reading = {}
        for field in self.fields:
            name = field.field_name
            text = (row.get(_COLUMN_OF[name]) or "").strip() if self.present[name] else ""
            if not text:
                value, refusal = self.when_empty[name]
                if refusal is not None:
                    return reading, name, refusal
                if value is not _UNSURE:
                    reading[name] = value
                continue
            quick = self.quick.get(name)
            value = quick(text) if quick else _UNSURE
            if value is _UNSURE:
                try:
                    value = field.run_validation(text)
                except serializers.ValidationError as exc:
                    return reading, name, exc.detail[0]
            reading[name] = value
        return reading, None, None


_UNSURE = object()
_COLUMN_OF = {field: column for column, field in COLUMNS.items()}
