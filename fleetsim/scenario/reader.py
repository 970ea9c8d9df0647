"""Typed, path-aware access to one table of a parsed TOML document.

A :class:`Table` wraps a mapping with its key path (``machine[0].position[1]``)
and the file name, refuses unknown keys with a did-you-mean, and reads values
of one kind each (text, number, count, probability, quantity with a unit,
duration). Every failure is an :class:`~fleetsim.errors.InputError` whose
``where`` is ``"<file>: <key path>"`` and whose message says what was expected
and what was found.
"""

from __future__ import annotations

import datetime as _dt
import difflib
import json
import math
import re
from collections.abc import Iterable, Mapping
from typing import Any, TypedDict, TypeVar

from fleetsim.bounds import Range
from fleetsim.errors import InputError
from fleetsim.scenario.model import Duration
from fleetsim.units import Kind, parse_quantity

_MISSING: Any = object()
_T = TypeVar("_T")
_BARE_KEY = re.compile(r"^[A-Za-z0-9_-]+$")

_UNIT_NAMES = {"force": "N", "speed": "rpm", "time": "h"}

#: Keys of a duration table, by kind.
DURATION_KEYS: dict[str, tuple[str, ...]] = {
    "fixed": ("kind", "value"),
    "exponential": ("kind", "mean"),
    "lognormal": ("kind", "median", "p90"),
    "weibull": ("kind", "shape", "scale"),
}


def show(value: Any) -> str:
    """Describe a TOML value for an error message."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, Mapping):
        return "a table"
    if isinstance(value, list):
        return "an array"
    if isinstance(value, (_dt.date, _dt.time)):
        return f"a date/time ({value})"
    if isinstance(value, str):
        return repr(value) if len(value) <= 60 else repr(value[:57] + "...")
    return repr(value)


def join(path: str, key: str | int) -> str:
    """Extend a key path by a key or an array index (odd keys quoted as in TOML)."""
    if isinstance(key, int):
        return f"{path}[{key}]"
    if not _BARE_KEY.match(key):
        key = json.dumps(key)
    return f"{path}.{key}" if path else key


def suggest(word: str, choices: Iterable[str]) -> str:
    """``"; did you mean 'x'?"`` or, without a close match, the list of choices."""
    options = sorted(set(choices))
    close = difflib.get_close_matches(word, options, n=1, cutoff=0.6)
    if close:
        return f"; did you mean {close[0]!r}?"
    if not options:
        return ""
    return "; expected one of: " + ", ".join(options)


class NumberBounds(TypedDict, total=False):
    """Bounds of :meth:`Table.number` that several keys of a section share."""

    minimum: float | None
    maximum: float | None
    exclusive_minimum: bool
    exclusive_maximum: bool


class NumberOptions(NumberBounds, total=False):
    """Bounds and description of :meth:`Table.number` that several keys share."""

    what: str
    within: Range | None


class Table:
    """One TOML table being read.

    Parameters
    ----------
    data
        The table's contents (checked to be a mapping).
    path
        Key path of the table (``""`` for the document).
    source
        File name for messages.
    allowed
        Keys this table may hold; any other key is an error with a did-you-mean.
    """

    def __init__(self, data: Any, path: str, source: str, allowed: Iterable[str]) -> None:
        self.path = path
        self.source = source
        if not isinstance(data, Mapping):
            raise InputError(self.where(), f"expected a table, got {show(data)}")
        self.data: Mapping[str, Any] = data
        self.allowed = tuple(allowed)
        for key in data:
            if key not in self.allowed:
                raise InputError(
                    self.where(key), f"unknown key {key!r}{suggest(key, self.allowed)}"
                )

    # --- paths and errors -----------------------------------------------------------
    def where(self, key: str | int | None = None) -> str:
        """``"<file>: <key path>"`` of the table or of one of its keys."""
        path = self.path if key is None else join(self.path, key)
        return f"{self.source}: {path}" if path else self.source

    def error(self, key: str | None, expected: str) -> InputError:
        """An :class:`InputError` at ``key`` of this table."""
        return InputError(self.where(key), expected)

    def build(self, cls: type[_T], keys: Mapping[str, str], /, **fields: Any) -> _T:
        """``cls(**fields)``: a frozen model object that checks its own bounds.

        The object raises :class:`InputError` naming its field
        (``"Duration.p90_h"``, ``"Machine 'pump'.count"``); ``keys`` maps field
        names to this table's keys, so the error names the key path in the
        file instead (one check, written once in the model, read from here).
        A field not in ``keys`` is named after the table's path.
        """
        try:
            return cls(**fields)
        except InputError as exc:
            head, _, rest = exc.where.partition(".")
            if not head.startswith(cls.__name__) or not rest:
                raise
            name = re.split(r"[.\[]", rest, maxsplit=1)[0]
            if name in keys:
                raise self.error(keys[name], exc.expected) from None
            raise self.error(None, f"{rest}: {exc.expected}") from None

    def has(self, key: str) -> bool:
        """True when the key is present."""
        return key in self.data

    def raw(self, key: str, default: Any = _MISSING, what: str = "a value") -> Any:
        """The value as parsed, or ``default`` (missing and no default: an error)."""
        if key in self.data:
            return self.data[key]
        if default is _MISSING:
            raise self.error(key, f"missing required key {key!r}: expected {what}")
        return default

    # --- plain values ---------------------------------------------------------------
    def text(self, key: str, default: Any = _MISSING, choices: Iterable[str] | None = None) -> Any:
        """A string, optionally one of ``choices``."""
        options = tuple(choices) if choices is not None else None
        what = "text" if options is None else "one of " + ", ".join(repr(c) for c in options)
        value = self.raw(key, default, what)
        if key not in self.data:
            return value
        if not isinstance(value, str):
            raise self.error(key, f"expected {what}, got {show(value)}")
        if options is not None and value not in options:
            close = difflib.get_close_matches(value, options, n=1, cutoff=0.6)
            hint = f"; did you mean {close[0]!r}?" if close else ""
            raise self.error(key, f"expected {what}, got {value!r}{hint}")
        return value

    def identifier(self, key: str = "id") -> str:
        """A required name: non-empty text without ``#`` (reserved for unit numbers)."""
        value = self.text(key)
        if not value.strip() or value != value.strip() or not value.isprintable():
            raise self.error(
                key,
                f"expected a non-empty printable name without surrounding spaces, got {value!r}",
            )
        if "#" in value:
            raise self.error(
                key, f"expected a name without '#' (reserved for unit numbers), got {value!r}"
            )
        return value

    def number(
        self,
        key: str,
        default: Any = _MISSING,
        *,
        minimum: float | None = None,
        maximum: float | None = None,
        exclusive_minimum: bool = False,
        exclusive_maximum: bool = False,
        what: str = "a number",
        within: Range | None = None,
    ) -> Any:
        """A finite bare number (int or float, not a boolean) within bounds.

        ``within`` gives the bounds and the name of a value listed in
        :mod:`fleetsim.bounds` (instead of ``minimum``, ``maximum`` and ``what``).
        """
        if within is not None:
            minimum, maximum, what = within.low, within.high, within.what
        value = self.raw(key, default, what)
        if key not in self.data:
            return value
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            hint = " (a bare number, no unit)" if isinstance(value, str) else ""
            raise self.error(key, f"expected {what}{hint}, got {show(value)}")
        try:
            x = float(value)
        except OverflowError:
            x = math.inf
        if not math.isfinite(x):
            raise self.error(key, f"expected {what} (finite), got {show(value)}")
        low_bad = minimum is not None and (x <= minimum if exclusive_minimum else x < minimum)
        high_bad = maximum is not None and (x >= maximum if exclusive_maximum else x > maximum)
        if low_bad or high_bad:
            raise self.error(
                key,
                f"expected {what} {_bounds(minimum, maximum, exclusive_minimum, exclusive_maximum)}, got {show(value)}",
            )
        return x

    def probability(self, key: str, default: Any = _MISSING, what: str = "a probability") -> Any:
        """A bare number in [0, 1]."""
        return self.number(key, default, minimum=0.0, maximum=1.0, what=what)

    def integer(
        self,
        key: str,
        default: Any = _MISSING,
        *,
        minimum: int | None = None,
        maximum: int | None = None,
        what: str = "a whole number",
    ) -> Any:
        """A TOML integer within bounds (``2.0`` and booleans are refused)."""
        value = self.raw(key, default, what)
        if key not in self.data:
            return value
        if isinstance(value, bool) or not isinstance(value, int):
            kind = what if "whole number" in what else f"{what} (a whole number)"
            raise self.error(key, f"expected {kind}, got {show(value)}")
        if (minimum is not None and value < minimum) or (maximum is not None and value > maximum):
            raise self.error(key, f"expected {what} {_bounds(minimum, maximum)}, got {value}")
        return value

    # --- quantities -----------------------------------------------------------------
    def quantity(
        self,
        key: str,
        kind: Kind,
        default: Any = _MISSING,
        *,
        positive: bool = False,
        maximum: float | None = None,
    ) -> Any:
        """A quantity with a unit, in the library's unit (N, rev/min, h), >= 0 (or > 0)."""
        value = self.raw(key, default, f"a {kind} with a unit")
        if key not in self.data:
            return value
        return self.parse_quantity_value(value, key, kind, positive=positive, maximum=maximum)

    def parse_quantity_value(
        self,
        value: Any,
        key: str,
        kind: Kind,
        *,
        positive: bool = False,
        maximum: float | None = None,
    ) -> float:
        """Parse one quantity value found at ``key`` and check its sign."""
        where = self.where(key)
        x = parse_quantity(value, kind, where)
        if not math.isfinite(x):
            raise InputError(where, f"expected a finite {kind}, got {show(value)}")
        if positive and not x > 0:
            raise InputError(where, f"expected a {kind} > 0, got {show(value)}")
        if x < 0:
            raise InputError(where, f"expected a {kind} >= 0, got {show(value)}")
        if maximum is not None and x > maximum * (1 + 1e-12):
            unit = _UNIT_NAMES[kind]
            raise InputError(
                where, f"expected a {kind} of at most {maximum:g} {unit}, got {show(value)}"
            )
        return x

    def duration(self, key: str, default: Any = _MISSING, *, positive: bool = False) -> Any:
        """A fixed or random duration in hours.

        A quantity string (``"8 h"``) is fixed; a table gives a distribution:
        ``{kind = "exponential", mean = "8 h"}``, ``{kind = "lognormal",
        median = "8 h", p90 = "20 h"}``, ``{kind = "weibull", shape = 2,
        scale = "30 d"}`` or ``{kind = "fixed", value = "8 h"}``.
        """
        value = self.raw(key, default, "a duration such as '8 h' or a table with a kind")
        if key not in self.data:
            return value
        if not isinstance(value, Mapping):
            return Duration.fixed(self.parse_quantity_value(value, key, "time", positive=positive))
        path = join(self.path, key)
        head = Table(
            value, path, self.source, ("kind", "value", "mean", "median", "p90", "shape", "scale")
        )
        kind = head.text("kind", choices=DURATION_KEYS)
        t = Table(value, path, self.source, DURATION_KEYS[kind])
        if kind == "fixed":
            return t.build(Duration, {"value_h": "value"}, kind="fixed",
                           value_h=t.quantity("value", "time", positive=positive))
        if kind == "exponential":
            return t.build(Duration, {"value_h": "mean"}, kind="exponential",
                           value_h=t.quantity("mean", "time", positive=True))
        if kind == "lognormal":
            return t.build(Duration, {"value_h": "median", "p90_h": "p90"}, kind="lognormal",
                           value_h=t.quantity("median", "time", positive=True),
                           p90_h=t.quantity("p90", "time", positive=True))
        return t.build(Duration, {"value_h": "scale", "shape": "shape"}, kind="weibull",
                       value_h=t.quantity("scale", "time", positive=True),
                       shape=t.number("shape", what="a Weibull shape"))

    # --- nested tables --------------------------------------------------------------
    def table(self, key: str, allowed: Iterable[str], *, required: bool = False) -> Table | None:
        """A sub-table, or None when absent and not required."""
        if key not in self.data:
            if required:
                raise self.error(key, f"missing required table [{join(self.path, key)}]")
            return None
        return Table(self.data[key], join(self.path, key), self.source, allowed)

    def tables(self, key: str, allowed: Iterable[str], *, required: bool = False) -> list[Table]:
        """An array of tables (``[[key]]`` or ``key = [{...}, ...]``)."""
        if key not in self.data:
            if required:
                raise self.error(key, f"missing required array of tables [[{key}]]")
            return []
        value = self.data[key]
        if not isinstance(value, list):
            raise self.error(key, f"expected an array of tables [[{key}]], got {show(value)}")
        if required and not value:
            raise self.error(key, f"expected at least one [[{key}]] entry, got none")
        allowed = tuple(allowed)
        return [
            Table(v, join(join(self.path, key), i), self.source, allowed)
            for i, v in enumerate(value)
        ]


def _bounds(
    minimum: float | None,
    maximum: float | None,
    exclusive_minimum: bool = False,
    exclusive_maximum: bool = False,
) -> str:
    lo = f"{'>' if exclusive_minimum else '>='} {minimum:g}" if minimum is not None else ""
    hi = f"{'<' if exclusive_maximum else '<='} {maximum:g}" if maximum is not None else ""
    if lo and hi:
        return f"{lo} and {hi}"
    return lo or hi
