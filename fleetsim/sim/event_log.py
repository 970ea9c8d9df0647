"""The event log of a replication written to a file as it happens, in bounded memory.

A replication of a large fleet over a long horizon logs millions of events;
held in memory they would grow without bound (the in-memory log of
:class:`~fleetsim.sim.records.Recorder` keeps only the first
:data:`~fleetsim.sim.records.MAX_EVENTS_KEPT`). An :class:`EventFile` instead
writes them as CSV rows (``time_h,unit,position,kind``, the columns of the
``events`` table) to a file, :data:`CHUNK_ROWS` rows at a time, so memory
stays bounded whatever the count, and the file holds every event.

Text cells that a spreadsheet would read as a formula (starting with ``=``,
``+``, ``-``, ``@``, a tab or a carriage return) get a leading apostrophe, as
in every CSV table of a report (:func:`fleetsim.report.tables.spreadsheet_safe`).
"""

from __future__ import annotations

import csv
import io
from os import PathLike
from pathlib import Path
from types import TracebackType

from fleetsim.errors import InputError

EVENT_COLUMNS = ("time_h", "unit", "position", "kind")
#: Rows held before they are written out (what memory the log takes, at most).
CHUNK_ROWS = 4096

_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def spreadsheet_text(text: str) -> str:
    """``text``, with a leading apostrophe when a spreadsheet would read it as a formula."""
    return "'" + text if text.startswith(_FORMULA_START) else text


class EventFile:
    """Writes the events of one replication to a CSV file as they are logged.

    Parameters
    ----------
    path
        The file to write (replaced if it exists). Its folder must exist.

    Use as a context manager, or call :meth:`close`; :meth:`write` has the
    signature of :meth:`fleetsim.sim.records.Recorder.log`.
    """

    __slots__ = ("path", "rows", "_buffer", "_file", "_safe")

    def __init__(self, path: str | PathLike[str]) -> None:
        self.path = Path(path)
        #: events written so far
        self.rows = 0
        self._buffer: list[tuple[float, str, str, str]] = []
        self._safe: dict[str, str] = {}
        try:
            self._file = self.path.open("w", encoding="utf-8", newline="")
        except OSError as exc:
            raise InputError(str(path), f"cannot write the event log ({exc.strerror or exc})") from None
        self._file.write(",".join(EVENT_COLUMNS) + "\n")

    def write(self, time_h: float, unit: str, position: str, kind: str) -> None:
        """Log one event (written out with the next full chunk)."""
        self._buffer.append((time_h, unit, position, kind))
        if len(self._buffer) >= CHUNK_ROWS:
            self.flush()

    def flush(self) -> None:
        """Write the rows held so far."""
        if not self._buffer:
            return
        cell = self._cell
        safe = self._safe
        lines = []
        for t, unit, position, kind in self._buffer:
            u = safe.get(unit)
            if u is None:
                u = safe[unit] = cell(unit)
            p = safe.get(position)
            if p is None:
                p = safe[position] = cell(position)
            k = safe.get(kind)
            if k is None:
                k = safe[kind] = cell(kind)
            lines.append(f"{float(t)!r},{u},{p},{k}\n")
        self._file.write("".join(lines))
        self.rows += len(lines)
        self._buffer.clear()

    @staticmethod
    def _cell(text: str) -> str:
        """One CSV cell: spreadsheet-safe, quoted as the csv module quotes it."""
        out = io.StringIO()
        csv.writer(out, lineterminator="").writerow([spreadsheet_text(text)])
        return out.getvalue()

    def close(self) -> None:
        """Write what is held and close the file."""
        if not self._file.closed:
            self.flush()
            self._file.close()

    def __enter__(self) -> EventFile:
        return self

    def __exit__(self, exc_type: type[BaseException] | None, exc: BaseException | None,
                 tb: TracebackType | None) -> None:
        self.close()
