"""Helpers shared by the command modules: errors, JSON, tables, quantity options."""

from __future__ import annotations

import json
import math
import re
from collections.abc import Sequence
from typing import Any

import click

from fleetsim.errors import InputError
from fleetsim.units import Kind, parse_quantity

EXIT_INPUT = 2


#: Longest slug (file-system names are limited to 255 bytes; the checkpoint
#: folder adds a prefix and a suffix).
MAX_SLUG = 64


def slug(name: str) -> str:
    """A file-system-friendly name: letters, digits, dots, dashes; at most 64 characters."""
    s = re.sub(r"[^A-Za-z0-9._-]+", "-", name).strip("-._").lower()
    return s[:MAX_SLUG].rstrip("-._") or "study"


def terminal_width(default: int = 100) -> int:
    """Characters per line for tables and text: ``COLUMNS`` if set, else the terminal's, else ``default``."""
    import shutil

    return max(40, shutil.get_terminal_size((default, 24)).columns)


def paragraphs(texts: Sequence[str], width: int, indent: str = "") -> str:
    """Paragraphs wrapped to ``width`` characters, one after another (an empty text is a blank line)."""
    import textwrap

    out = []
    for text in texts:
        lead = text[: len(text) - len(text.lstrip(" "))]
        out.append(
            textwrap.fill(text.strip(), width, initial_indent=lead,
                          subsequent_indent=indent or lead, break_on_hyphens=False)
            if text.strip() else ""
        )
    return "\n".join(out)


def fit_lines(lines: Sequence[str], width: int, indent: str = "    ") -> list[str]:
    """Table lines cut to ``width``: what runs past it goes, after its last gap of two or more
    spaces, onto a continuation line (indented), wrapped in turn."""
    import re
    import textwrap

    out: list[str] = []
    for line in lines:
        line = line.rstrip()
        if len(line) <= width:
            out.append(line)
            continue
        gaps = [m.end() for m in re.finditer(r" {2,}", line[: width + 1])]
        cut = gaps[-1] if gaps else width
        out.append(line[:cut].rstrip())
        out += textwrap.wrap(line[cut:].strip(), width, initial_indent=indent,
                             subsequent_indent=indent) or []
    return out


def fail(message: str, code: int = EXIT_INPUT) -> int:
    """Print one error line to standard error and return the exit code."""
    click.echo(f"fleetsim: error: {message}", err=True)
    return code


def quantity(text: str | None, kind: Kind, option: str) -> float | None:
    """Parse an option's quantity; None stays None."""
    if text is None:
        return None
    return parse_quantity(text, kind, option)


def positive(value: float | None, option: str, what: str = "value") -> float | None:
    """Check a parsed option is > 0."""
    if value is not None and not (value > 0 and math.isfinite(value)):
        raise InputError(option, f"expected a {what} > 0, got {value:g}")
    return value


def _clean(obj: Any) -> Any:
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {k: _clean(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_clean(v) for v in obj]
    return obj


def echo_json(obj: Any) -> None:
    """Print one JSON object (non-finite floats become null)."""
    click.echo(json.dumps(_clean(obj), indent=2, allow_nan=False))


def table(rows: Sequence[tuple[str, str]], title: str | None = None) -> str:
    """A two-column text table: name, value."""
    width = max((len(k) for k, _ in rows), default=0)
    lines = [title, "-" * len(title)] if title else []
    lines += [f"{k:<{width}}  {v}" for k, v in rows]
    return "\n".join(lines)


def fmt(value: float | None, spec: str = ".4g", unit: str = "") -> str:
    """Format a number for a table; None as a dash."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "—"
    return f"{value:{spec}}{(' ' + unit) if unit else ''}"

