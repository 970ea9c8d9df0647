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

``fitted_on``, ``removed_on`` (optional, instead of ``hours``)
    Dates (ISO, ``2024-03-01``, or spreadsheet dates) of the bearing's fitting
    and of its failure or removal, as a work-order export gives them. The
    operating hours are the calendar hours between them times the machine's
    running share (operating hours per year / 8766 h); a still-running
    bearing without ``removed_on`` runs to the ``as_of`` date.

Lines starting with ``#`` are comments. Any other column is an error (a
misspelt ``hours_to`` must not be ignored silently). Errors name the file, the
sheet (XLSX), the row (as a spreadsheet shows it) and the column. Records may
be ``.csv`` or ``.xlsx`` (:mod:`fleetsim.spreadsheet`); ``columns`` maps an
export's own column names to these, ``outcome_words`` its own outcome words
(``Breakdown`` → ``failed``).
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass
from datetime import date, datetime
from pathlib import Path

import numpy as np
import pandas as pd

from fleetsim.errors import InputError
from fleetsim.fit.sample import CensoredSample
from fleetsim.spreadsheet import read_table
from fleetsim.spreadsheet import where as cell_where

OUTCOMES = ("failed", "removed-while-good", "still-running")
REQUIRED_COLUMNS = ("outcome",)
OPTIONAL_COLUMNS = (
    "hours", "position", "bearing", "machine", "hours_from", "hours_to", "note",
    "fitted_on", "removed_on",
)  # fmt: skip
HOURS_PER_YEAR = 8766.0
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


@dataclass(frozen=True)
class DateRule:
    """How dates become operating hours.

    Attributes
    ----------
    running_share
        Share of calendar time the machine runs, by machine id; ``default``
        for machines not listed (None: dates are refused for them).
    default
        The share for any machine not in ``running_share``.
    as_of
        The date a still-running bearing without ``removed_on`` is counted to.
    """

    running_share: dict[str, float]
    default: float | None = None
    as_of: date | None = None

    def share(self, machine: str) -> float | None:
        """The running share of ``machine``, or None when unknown."""
        return self.running_share.get(machine, self.default)


def read_records(
    path: str | Path,
    *,
    sheet: str | None = None,
    columns: dict[str, str] | None = None,
    outcome_words: dict[str, str] | None = None,
    dates: DateRule | None = None,
) -> FieldRecords:
    """Read a records file, CSV or XLSX (see the module docstring for the columns).

    Parameters
    ----------
    path
        The file.
    sheet
        The sheet of an XLSX workbook (default the first).
    columns
        ``{their column: ours}`` for exports named otherwise.
    outcome_words
        ``{their word: failed | removed-while-good | still-running}``.
    dates
        Running shares (and the as-of date) for records given by dates.

    Raises
    ------
    InputError
        One line naming the file, sheet, row and column of the first problem:
        unreadable file, missing or unknown column, a number that is not a
        number or is negative, an unknown outcome word, a bad date or a date
        without a running share, an inspection interval that is incomplete,
        reversed, or on a record that did not fail.
    """
    path = Path(path)
    src = str(path)
    header, header_row, rows, sheet_name = read_table(
        path, REQUIRED_COLUMNS, OPTIONAL_COLUMNS, what="records",
        header_hint="hours, outcome, ...", sheet=sheet, rename=columns,
    )  # fmt: skip
    if "hours" not in header and "fitted_on" not in header:
        raise InputError(
            cell_where(src, header_row, sheet=sheet_name),
            "expected an hours column, or fitted_on (and removed_on) dates",
        )
    if ("hours_from" in header) != ("hours_to" in header):
        raise InputError(
            cell_where(src, header_row, sheet=sheet_name),
            "expected both hours_from and hours_to columns, or neither",
        )
    words = {k.strip().lower(): v for k, v in (outcome_words or {}).items()}
    for k, v in words.items():
        if _outcome(v) is None:
            raise InputError("outcome words", f"{k}={v}: expected one of {', '.join(OUTCOMES)}")
    label = src if sheet_name is None else f"{src}: sheet {sheet_name!r}"
    records = []
    for line_no, rec in rows:
        if words and rec["outcome"].strip().lower() in words:
            rec = {**rec, "outcome": words[rec["outcome"].strip().lower()]}
        if not rec.get("hours") and rec.get("fitted_on"):
            rec = {**rec, "hours": _hours_from_dates(src, sheet_name, line_no, rec, dates)}
        records.append(_parse_row(label, line_no, rec))
    if not records:
        raise InputError(src, "has a header but no records")
    table = pd.DataFrame.from_records(records)
    return FieldRecords(source=src, table=table, columns=tuple(header))


def _date(src: str, sheet: str | None, row: int, col: str, raw: str) -> datetime:
    try:
        return datetime.fromisoformat(raw.strip())
    except ValueError:
        raise InputError(
            cell_where(src, row, col, sheet), f"expected a date like 2024-03-01, got {raw!r}"
        ) from None


def _hours_from_dates(
    src: str, sheet: str | None, row: int, rec: dict[str, str], dates: DateRule | None
) -> str:
    """Operating hours between fitted_on and removed_on (or the as-of date), as text."""
    start = _date(src, sheet, row, "fitted_on", rec["fitted_on"])
    if rec.get("removed_on"):
        end = _date(src, sheet, row, "removed_on", rec["removed_on"])
    elif dates is not None and dates.as_of is not None:
        end = datetime.combine(dates.as_of, datetime.min.time())
    else:
        raise InputError(
            cell_where(src, row, "removed_on", sheet),
            "expected a date, or an as-of date for bearings still running (--as-of)",
        )
    share = dates.share(rec.get("machine", "")) if dates is not None else None
    if share is None:
        raise InputError(
            cell_where(src, row, "fitted_on", sheet),
            f"dates need the running share of machine {rec.get('machine', '')!r} "
            "(--running-share, or --scenario with that machine)",
        )
    calendar_h = (end - start).total_seconds() / 3600.0
    if calendar_h < 0:
        raise InputError(
            cell_where(src, row, "removed_on", sheet),
            f"expected a date after fitted_on ({rec['fitted_on']}), got {end.date().isoformat()}",
        )
    return f"{calendar_h * share:.6f}"


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
    hours = _number(src, row, "hours", rec.get("hours", ""), allow_empty=interval)
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
