"""Reading a plant's bearing records (CSV) into censored samples.

One row per bearing life: from fitting to failure, removal or today.

Columns (header in the first non-comment line; names are case-insensitive):

``hours`` (required)
    Operating hours of the bearing at failure, removal or now.
``outcome`` (required)
    ``failed``, ``removed-while-good`` or ``still-running`` (underscores or
    spaces instead of hyphens are accepted).
``position``, ``bearing`` (optional, at least one recommended)
    The position (e.g. ``DE``) and the bearing designation; records can be
    fitted by either group.
``hours_from``, ``hours_to`` (optional)
    For a failure found at an inspection: the hours at the last inspection
    that found the bearing good and at the one that found it failed. The
    life then lies in ``(hours_from, hours_to]``. ``hours`` may be left empty
    on such a row; if given it must equal ``hours_to``. Leave both empty for
    exact failures and suspensions.
``machine``, ``note`` (optional)
    Kept for the reader, not used in the fit.

Lines starting with ``#`` are comments. Any other column is an error (a
misspelt ``hours_to`` must not be ignored silently). Errors name the file, the
row (the line number in the file, as a spreadsheet shows it) and the column.
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from fleetsim.csvtable import read_rows
from fleetsim.errors import InputError
from fleetsim.fit.sample import CensoredSample

OUTCOMES = ("failed", "removed-while-good", "still-running")
REQUIRED_COLUMNS = ("hours", "outcome")
OPTIONAL_COLUMNS = ("position", "bearing", "machine", "hours_from", "hours_to", "note")
GROUP_COLUMNS = ("position", "bearing")


@dataclass(frozen=True, eq=False)
class FieldRecords:
    """Bearing records read from a file.

    Attributes
    ----------
    source
        The file name, for messages.
    table
        One row per record with columns ``row`` (line number in the file),
        ``position``, ``bearing``, ``machine``, ``outcome``, ``hours``,
        ``hours_from``, ``hours_to`` (NaN where empty) and ``note``.
    columns
        The columns the file had.
    """

    source: str
    table: pd.DataFrame
    columns: tuple[str, ...]

    def sample(
        self, label: str | None = None, per_l10_h: np.ndarray | None = None
    ) -> CensoredSample:
        """All records as one censored sample.

        With ``per_l10_h`` (one catalogue L10 in hours per row of
        :attr:`table`) every age is divided by its own row's L10, giving a
        sample in units of L10 for :func:`fleetsim.fit.field_factor.fit_field_factor`.
        """
        t = self.table
        interval = t["hours_from"].notna().to_numpy()
        failed = (t["outcome"] == "failed").to_numpy()
        scale = np.ones(len(t)) if per_l10_h is None else np.asarray(per_l10_h, dtype=float)
        hours, h_from, h_to = (t[c].to_numpy(float) / scale for c in ("hours", "hours_from", "hours_to"))
        return CensoredSample(
            failures_h=hours[failed & ~interval],
            suspensions_h=hours[~failed],
            interval_lower_h=h_from[interval],
            interval_upper_h=h_to[interval],
            label=label or self.source,
        )

    def groups(self, by: str) -> dict[str, CensoredSample]:
        """One sample per value of column ``by`` (``position`` or ``bearing``), in file order.

        Raises
        ------
        InputError
            When the file has no such column or a row leaves it empty.
        """
        return {
            value: sub.sample(label=f"{self.source} [{by} {value}]")
            for value, sub in self.group_records(by).items()
        }

    def group_records(self, by: str) -> dict[str, FieldRecords]:
        """The records of each value of column ``by``, in file order (see :meth:`groups`)."""
        if by not in GROUP_COLUMNS:
            raise InputError("group by", f"expected one of {', '.join(GROUP_COLUMNS)}, got {by!r}")
        if by not in self.columns:
            raise InputError(self.source, f"has no {by!r} column to group by")
        empty = self.table[self.table[by] == ""]
        if not empty.empty:
            row = int(empty["row"].iloc[0])
            raise InputError(
                f"{self.source}: row {row}, column {by}", "expected a value to group by"
            )
        return {
            value: FieldRecords(self.source, self.table[self.table[by] == value], self.columns)
            for value in dict.fromkeys(self.table[by])
        }


def _outcome(raw: str) -> str | None:
    word = raw.strip().lower().replace("_", "-").replace(" ", "-")
    return word if word in OUTCOMES else None


def read_records(path: str | Path) -> FieldRecords:
    """Read a records CSV (see the module docstring for the columns).

    Raises
    ------
    InputError
        One line naming the file, row and column of the first problem:
        unreadable file, missing or unknown column, a number that is not a
        number or is negative, an unknown outcome word, an inspection
        interval that is incomplete, reversed, or on a record that did not
        fail.
    """
    path = Path(path)
    src = str(path)
    header, header_row, rows = read_rows(
        path, REQUIRED_COLUMNS, OPTIONAL_COLUMNS, what="records",
        header_hint="hours, outcome, ...",
    )
    if ("hours_from" in header) != ("hours_to" in header):
        raise InputError(
            f"{src}: row {header_row}", "expected both hours_from and hours_to columns, or neither"
        )
    records = [_parse_row(src, line_no, rec) for line_no, rec in rows]
    if not records:
        raise InputError(src, "has a header but no records")
    table = pd.DataFrame.from_records(records)
    return FieldRecords(source=src, table=table, columns=tuple(header))


def _number(src: str, row: int, col: str, raw: str, allow_empty: bool = False) -> float:
    where = f"{src}: row {row}, column {col}"
    if raw == "":
        if allow_empty:
            return math.nan
        raise InputError(where, "expected a number of operating hours, got an empty cell")
    try:
        value = float(raw.replace("_", ""))
    except ValueError:
        raise InputError(where, f"expected a number of operating hours, got {raw!r}") from None
    if not math.isfinite(value) or value < 0:
        raise InputError(where, f"expected operating hours >= 0, got {raw!r}")
    return value


def _parse_row(src: str, row: int, rec: dict[str, str]) -> dict[str, object]:
    outcome = _outcome(rec["outcome"])
    if outcome is None:
        close = difflib.get_close_matches(rec["outcome"].strip().lower(), OUTCOMES, n=1)
        hint = f" (did you mean {close[0]!r}?)" if close else ""
        raise InputError(
            f"{src}: row {row}, column outcome",
            f"expected {', '.join(OUTCOMES)}, got {rec['outcome']!r}{hint}",
        )
    h_from = _number(src, row, "hours_from", rec.get("hours_from", ""), allow_empty=True)
    h_to = _number(src, row, "hours_to", rec.get("hours_to", ""), allow_empty=True)
    interval = not (math.isnan(h_from) and math.isnan(h_to))
    hours = _number(src, row, "hours", rec["hours"], allow_empty=interval)
    if interval:
        if math.isnan(h_from) or math.isnan(h_to):
            col = "hours_from" if math.isnan(h_from) else "hours_to"
            raise InputError(
                f"{src}: row {row}, column {col}",
                "expected both hours_from and hours_to for a failure found at inspection",
            )
        if outcome != "failed":
            raise InputError(
                f"{src}: row {row}, column hours_from",
                f"an inspection interval is only for outcome 'failed', this row is {outcome!r}",
            )
        if not h_to > h_from:
            raise InputError(
                f"{src}: row {row}, column hours_to",
                f"expected hours_to > hours_from, got {h_to:g} <= {h_from:g}",
            )
        if math.isnan(hours):
            hours = h_to
        elif abs(hours - h_to) > 1e-9 * max(1.0, h_to):
            raise InputError(
                f"{src}: row {row}, column hours",
                f"expected hours equal to hours_to ({h_to:g}) or empty on a failure found at "
                f"inspection, got {hours:g}",
            )
    elif outcome == "failed" and hours == 0:
        raise InputError(f"{src}: row {row}, column hours", "expected a failure age > 0 h, got 0")
    return {
        "row": row,
        "position": rec.get("position", ""),
        "bearing": rec.get("bearing", ""),
        "machine": rec.get("machine", ""),
        "outcome": outcome,
        "hours": hours,
        "hours_from": h_from,
        "hours_to": h_to,
        "note": rec.get("note", ""),
    }
