"""Reading the small CSV files users keep (field records, starting ages).

One reader for every such file, so they all behave alike: UTF-8 (with or
without a byte-order mark), blank lines and ``#`` comment lines skipped,
header names case-insensitive, unknown columns refused with a did-you-mean,
and every error one line naming the file, the row (the line number a text
editor or spreadsheet shows) and the column.
"""

from __future__ import annotations

import csv
import difflib
import io
from collections.abc import Sequence
from os import PathLike
from pathlib import Path

from fleetsim.errors import InputError


def read_rows(
    path: str | PathLike[str],
    required: Sequence[str],
    optional: Sequence[str],
    *,
    what: str,
    header_hint: str,
) -> tuple[list[str], int, list[tuple[int, dict[str, str]]]]:
    """Read a CSV file into its header and one ``{column: text}`` per row.

    Parameters
    ----------
    path
        The file.
    required, optional
        Column names (lower case) that must and may appear.
    what
        The file's kind in messages, e.g. ``"records"``.
    header_hint
        The columns named in the message for an empty file, e.g. ``"hours, outcome, ..."``.

    Returns
    -------
    (header, header_row, rows)
        ``rows`` holds ``(line number, {column: stripped text})``.

    Raises
    ------
    InputError
        Unreadable file, no header, a quoted value over several lines, an
        unknown, repeated or missing column, a row with the wrong number of values.
    """
    src = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise InputError(src, f"cannot read the {what} file (not UTF-8 text)") from None
    except (OSError, ValueError) as exc:
        reason = getattr(exc, "strerror", None) or str(exc)
        raise InputError(src, f"cannot read the {what} file ({reason})") from None
    lines = [(i, ln) for i, ln in enumerate(text.splitlines(), start=1)]
    lines = [(i, ln) for i, ln in lines if ln.strip() and not ln.lstrip().startswith("#")]
    if not lines:
        raise InputError(src, f"expected a header line ({header_hint}) and {what}")
    cells_by_line: list[list[str]] = []
    try:
        for cells in csv.reader(io.StringIO("\n".join(ln for _, ln in lines))):
            cells_by_line.append(cells)
    except csv.Error as exc:  # e.g. a value over csv.field_size_limit() characters
        row = lines[min(len(cells_by_line), len(lines) - 1)][0]
        raise InputError(f"{src}: row {row}", f"cannot read the values of this row ({exc})") from None
    if len(cells_by_line) != len(lines):
        raise InputError(src, "a quoted value spans several lines; keep every row on one line")
    header = [h.strip().lower() for h in cells_by_line[0]]
    header_row = lines[0][0]
    known = list(required) + list(optional)
    for h in header:
        if h not in known:
            close = difflib.get_close_matches(h, known, n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise InputError(
                f"{src}: row {header_row}",
                f"unknown column {h!r}{hint}; expected {', '.join(known)}",
            )
    dupes = sorted({h for h in header if header.count(h) > 1})
    if dupes:
        raise InputError(f"{src}: row {header_row}", f"column {dupes[0]!r} appears twice")
    missing = [c for c in required if c not in header]
    if missing:
        raise InputError(f"{src}: row {header_row}", f"missing column(s) {', '.join(missing)}")
    rows = []
    for (line_no, _), cells in zip(lines[1:], cells_by_line[1:], strict=True):
        if len(cells) != len(header):
            raise InputError(
                f"{src}: row {line_no}",
                f"expected {len(header)} values (one per column), got {len(cells)}",
            )
        rows.append((line_no, dict(zip(header, (c.strip() for c in cells), strict=True))))
    return header, header_row, rows
