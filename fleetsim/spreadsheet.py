"""Tables users keep in spreadsheets: CSV through :mod:`fleetsim.csvtable`, XLSX through pandas.

An asset register or a work-order export arrives as ``.csv`` or ``.xlsx``.
Both are read into the same shape as :func:`fleetsim.csvtable.read_rows`
(header, header row, ``(row, {column: text})``), so every reader behaves
alike: header names case-insensitive, unknown columns refused with a
did-you-mean, and errors naming the file, the sheet (XLSX), the row as the
spreadsheet shows it, and the column. XLSX is read by pandas with openpyxl
(the first sheet unless one is named); empty rows are skipped; numbers keep
the text a reader would see (``12`` not ``12.0``); dates become ISO dates
(``2024-03-01``).
"""

from __future__ import annotations

import difflib
import math
from collections.abc import Mapping, Sequence
from datetime import date, datetime
from os import PathLike
from pathlib import Path
from typing import Any

from fleetsim.csvtable import read_rows
from fleetsim.errors import InputError

Rows = list[tuple[int, dict[str, str]]]


def _cell(value: Any) -> str:
    """The text of one spreadsheet cell."""
    if value is None:
        return ""
    if isinstance(value, float):
        if math.isnan(value):
            return ""
        return f"{value:.15g}"
    if isinstance(value, datetime):
        return value.date().isoformat() if value.time() == datetime.min.time() else value.isoformat()
    if isinstance(value, date):
        return value.isoformat()
    if hasattr(value, "isoformat"):  # pandas Timestamp
        return str(value.isoformat())
    return str(value).strip()


def where(source: str, row: int, column: str | None = None, sheet: str | None = None) -> str:
    """``"file: sheet S, row R, column C"`` for messages (no sheet for CSV)."""
    parts = [f"sheet {sheet!r}"] if sheet else []
    parts.append(f"row {row}")
    if column:
        parts.append(f"column {column}")
    return f"{source}: " + ", ".join(parts)


def read_table(
    path: str | PathLike[str],
    required: Sequence[str],
    optional: Sequence[str],
    *,
    what: str,
    header_hint: str,
    sheet: str | None = None,
    rename: Mapping[str, str] | None = None,
) -> tuple[list[str], int, Rows, str | None]:
    """Read a CSV or XLSX table.

    ``rename`` maps a column name of the file (any case) to the name the
    reader expects, for exports whose columns are named otherwise (a
    work-order system's ``Equipment`` → ``machine``). Returned headers and
    rows use the expected names.

    Returns
    -------
    (header, header_row, rows, sheet)
        As :func:`fleetsim.csvtable.read_rows`, and the sheet's name (None for CSV).

    Raises
    ------
    InputError
        An unreadable file or sheet, an unknown, repeated or missing column.
    """
    src = str(path)
    theirs = {k.strip().lower(): v for k, v in (rename or {}).items()}
    known_ours = set(required) | set(optional)
    for k, v in theirs.items():
        if v not in known_ours:
            raise InputError(
                "column map", f"{k}={v}: expected one of {', '.join([*required, *optional])}"
            )
    req = [c for c in required if c not in theirs.values()]
    req += [k for k, v in theirs.items() if v in required]
    opt = [c for c in optional if c not in theirs.values()] + [
        k for k, v in theirs.items() if v not in required
    ]
    suffix = Path(path).suffix.lower()
    if suffix in (".csv", ".txt"):
        if sheet is not None:
            raise InputError(src, "a CSV file has no sheets; leave out the sheet option")
        head, head_row, csv_rows = read_rows(path, req, opt, what=what, header_hint=header_hint)
        return _renamed(head, head_row, csv_rows, None, theirs)
    if suffix not in (".xlsx", ".xlsm"):
        raise InputError(src, f"expected a .csv or .xlsx {what} file, got {suffix or 'no suffix'!r}")
    import pandas as pd

    try:
        book = pd.read_excel(
            path, sheet_name=None, header=None, dtype=object, engine="openpyxl"
        )
    except FileNotFoundError:
        raise InputError(src, f"cannot read the {what} file (no such file)") from None
    except ImportError as exc:  # pragma: no cover - a dependency of fleetsim
        raise InputError(src, f"reading .xlsx needs openpyxl ({exc})") from None
    except Exception as exc:  # a damaged or foreign file: one line, never a traceback
        raise InputError(src, f"cannot read the {what} workbook ({type(exc).__name__})") from None
    if sheet is None:
        sheet = next(iter(book))
    elif sheet not in book:
        close = difflib.get_close_matches(sheet, list(book), n=1)
        hint = f" (did you mean {close[0]!r}?)" if close else ""
        raise InputError(src, f"no sheet {sheet!r}{hint}; the workbook has {', '.join(book)}")
    frame = book[sheet]
    lines = []
    for i, values in enumerate(frame.itertuples(index=False, name=None), start=1):
        cells = [_cell(v) for v in values]
        if any(cells) and not cells[0].startswith("#"):
            lines.append((i, cells))
    if not lines:
        raise InputError(f"{src}: sheet {sheet!r}", f"expected a header row ({header_hint}) and {what}")
    header_row, head_cells = lines[0]
    while head_cells and not head_cells[-1]:
        head_cells = head_cells[:-1]
    header = [h.lower() for h in head_cells]
    required, known = req, req + opt
    for h in header:
        if h not in known:
            close = difflib.get_close_matches(h, known, n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise InputError(
                where(src, header_row, sheet=sheet),
                f"unknown column {h!r}{hint}; expected {', '.join(known)}",
            )
    dupes = sorted({h for h in header if header.count(h) > 1})
    if dupes:
        raise InputError(where(src, header_row, sheet=sheet), f"column {dupes[0]!r} appears twice")
    missing = [c for c in required if c not in header]
    if missing:
        raise InputError(
            where(src, header_row, sheet=sheet), f"missing column(s) {', '.join(missing)}"
        )
    rows: Rows = []
    for i, cells in lines[1:]:
        extra = [c for c in cells[len(header):] if c]
        if extra:
            raise InputError(where(src, i, sheet=sheet), f"a value {extra[0]!r} beyond the last column")
        cells = cells + [""] * (len(header) - len(cells))
        rows.append((i, dict(zip(header, cells[: len(header)], strict=True))))
    return _renamed(header, header_row, rows, sheet, theirs)


def _renamed(
    header: list[str], header_row: int, rows: Rows, sheet: str | None, theirs: dict[str, str]
) -> tuple[list[str], int, Rows, str | None]:
    if not theirs:
        return header, header_row, rows, sheet
    new = [theirs.get(h, h) for h in header]
    return new, header_row, [(i, {theirs.get(k, k): v for k, v in r.items()}) for i, r in rows], sheet
