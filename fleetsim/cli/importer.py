"""``fleetsim import``: an asset register (CSV or XLSX) and a catalogue → a scenario file."""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path

import click

from fleetsim import SAFETY_CAUTION
from fleetsim.cli.common import echo_json
from fleetsim.errors import InputError
from fleetsim.scenario.register import import_register


def _write(text: str, path: Path, option: str) -> None:
    """Write a text file atomically (a temporary file beside it, then os.replace)."""
    if not path.parent.is_dir():
        raise InputError(option, f"the folder {str(path.parent)!r} does not exist")
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            fh.write(text)
        os.replace(tmp, path)
    except OSError as exc:
        raise InputError(option, f"cannot write {str(path)!r} ({exc.strerror})") from None
    finally:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)


@click.command("import")
@click.argument("assets", metavar="ASSETS.(csv|xlsx)")
@click.option("--catalog", "catalog", required=True, metavar="CAT.csv",
              help="Bearing catalogue CSV (designation, type, dynamic_rating_kN, ...).")  # fmt: skip
@click.option("--out", "out", required=True, metavar="SCEN.toml", help="Scenario file to write.")
@click.option("--settings", metavar="SETTINGS.toml",
              help="The scenario's other sections ([study], [costs], [policy], ...), copied.")  # fmt: skip
@click.option("--sheet", metavar="NAME", help="Sheet of an .xlsx register (default: the first).")
@click.option("--force", is_flag=True, help="Overwrite SCEN.toml and its ages file if they exist.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON object.")
def import_(
    assets: str,
    catalog: str,
    out: str,
    settings: str | None,
    sheet: str | None,
    force: bool,
    as_json: bool,
) -> None:
    """Write a commented scenario (and its ages file) from an asset register.

    ASSETS has one row per machine position: machine, position, bearing,
    loads (radial_load_kN, axial_load_kN), speed_rpm, operating_hours_per_year,
    hours_since_change and the optional columns of docs/scenario-format.md.
    """
    target = Path(out)
    ages_path = target.with_name(f"{target.stem}_ages.csv")
    result = import_register(assets, catalog, settings=settings, ages_name=ages_path.name,
                             sheet=sheet)  # fmt: skip
    written = [target] + ([ages_path] if result.ages_csv is not None else [])
    if not force:
        for p in written:
            if p.exists():
                raise InputError("--out", f"{str(p)!r} exists; give --force to overwrite it")
    _write(result.scenario_toml, target, "--out")
    if result.ages_csv is not None:
        _write(result.ages_csv, ages_path, "--out")
    if as_json:
        echo_json(
            {
                "scenario": str(target),
                "ages": str(ages_path) if result.ages_csv is not None else None,
                "machines": result.machines,
                "positions": result.positions,
                "caution": SAFETY_CAUTION,
            }
        )
        return
    click.echo(
        f"Wrote {target} ({result.machines} machine(s), {result.positions} position(s))"
        + (f" and its ages file {ages_path}" if result.ages_csv is not None else "")
        + f".\nCheck it with: fleetsim check {target}\n\n{SAFETY_CAUTION}"
    )
