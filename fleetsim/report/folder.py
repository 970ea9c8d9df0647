"""The report folder: what fleetsim owns in it, and replacing it atomically.

A report is built in a hidden sibling folder and swapped into place only
when complete; fleetsim replaces only the files listed in the folder's
manifest (a report written before manifests: the names it always wrote), and
carries every other file or folder over into the new report. A writer killed
between the two renames is recovered by the next write to the same place.
See :mod:`fleetsim.report.writer`.
"""

from __future__ import annotations

import glob
import json
import os
import secrets
import shutil
from pathlib import Path

from fleetsim.errors import InputError
from fleetsim.report import summary_json

HTML_NAME = "report.html"
SUMMARY_NAME = "summary.json"
FIGURES_DIR = "figures"
MANIFEST_NAME = ".fleetsim-manifest.json"
#: What a report written before manifests owned (its top-level names).
_LEGACY_OWNED = frozenset(
    {HTML_NAME, SUMMARY_NAME, FIGURES_DIR, "replications.csv", "summary.csv", "headline.csv",
     "events.csv"}
)


def _is_report_dir(path: Path) -> bool:
    try:
        doc = json.loads((path / SUMMARY_NAME).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return False
    return isinstance(doc, dict) and doc.get("report_format") == summary_json.REPORT_FORMAT


def check_report_folder(out_dir: str | Path, where: str | None = None) -> None:
    """Refuse a report folder that cannot be one: a file, or a path below a file.

    Checked by the command line before any work starts; ``where`` names the
    option in the message (default: the path).
    """
    out_dir = Path(out_dir)
    where = where or str(out_dir)
    if out_dir.exists() and not out_dir.is_dir():
        raise InputError(where, f"expected a folder for the report, {str(out_dir)!r} is a file")
    for parent in out_dir.parents:
        if parent.exists():
            if not parent.is_dir():
                raise InputError(
                    where, f"expected a folder for the report, {str(parent)!r} is a file"
                )
            break


def check_target(out_dir: Path) -> None:
    check_report_folder(out_dir)
    if out_dir.is_dir() and any(out_dir.iterdir()) and not _is_report_dir(out_dir):
        raise InputError(
            str(out_dir),
            "the directory exists and is not a fleetsim report; refusing to replace it "
            "(choose an empty or new directory)",
        )


def sibling(out_dir: Path, kind: str) -> Path:
    while True:
        path = out_dir.parent / f".{out_dir.name}.{kind}-{os.getpid()}-{secrets.token_hex(4)}"
        try:
            path.mkdir()
        except FileExistsError:
            continue
        return path


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def recover(out_dir: Path) -> None:
    """Clean up after a writer that was killed: restore its old report, drop its half-built one.

    Only siblings left by processes that no longer run are touched.
    """
    prefix = f".{out_dir.name}."
    for path in sorted(out_dir.parent.glob(glob.escape(prefix) + "*-*-*")):
        kind, _, rest = path.name[len(prefix) :].partition("-")
        pid = rest.partition("-")[0]
        if kind not in ("new", "old") or not pid.isdigit() or not path.is_dir():
            continue
        if int(pid) == os.getpid() or _alive(int(pid)):
            continue
        if kind == "old" and not out_dir.exists():
            path.rename(out_dir)
        else:
            shutil.rmtree(path, ignore_errors=True)


def _owned(out_dir: Path) -> set[str]:
    """Relative paths of the files fleetsim wrote into an existing report (its manifest)."""
    try:
        doc = json.loads((out_dir / MANIFEST_NAME).read_text(encoding="utf-8"))
        files = doc["files"]
        if isinstance(files, list) and all(isinstance(f, str) for f in files):
            return set(files) | {MANIFEST_NAME}
    except (OSError, ValueError, KeyError, TypeError):
        pass
    owned = {MANIFEST_NAME, *_LEGACY_OWNED}
    figures_dir = out_dir / FIGURES_DIR
    if figures_dir.is_dir():
        owned |= {f"{FIGURES_DIR}/{p.name}" for p in figures_dir.iterdir() if p.suffix == ".png"}
    return owned


def _link_or_copy(src: str, dst: str) -> None:
    try:
        os.link(src, dst, follow_symlinks=False)
    except OSError:
        shutil.copy2(src, dst, follow_symlinks=False)


def carry_over(out_dir: Path, work: Path) -> None:
    """Bring the user's own files and folders of the old report ``out_dir`` into ``work``."""
    if not out_dir.is_dir():
        return
    owned = _owned(out_dir)
    for path in sorted(out_dir.rglob("*")):
        rel = path.relative_to(out_dir).as_posix()
        target = work / rel
        if rel in owned or target.exists() or target.is_symlink():
            continue  # fleetsim's own, or a name fleetsim writes now: the new one wins
        if path.is_dir() and not path.is_symlink():
            if not any(path.iterdir()):
                target.mkdir(parents=True)
            continue
        target.parent.mkdir(parents=True, exist_ok=True)
        if path.is_symlink():
            os.symlink(os.readlink(path), target)
        else:
            _link_or_copy(str(path), str(target))


def swap_in(new: Path, out_dir: Path) -> None:
    """Replace ``out_dir`` by ``new``: rename the old away, rename the new in, delete the old."""
    if not out_dir.exists():
        new.rename(out_dir)
        return
    old = sibling(out_dir, "old")
    old.rmdir()
    out_dir.rename(old)
    try:
        new.rename(out_dir)
    except BaseException:
        old.rename(out_dir)
        raise
    shutil.rmtree(old, ignore_errors=True)
