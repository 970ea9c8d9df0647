"""The ``fleetsim`` command line: parse, call the library, print.

Every command has a readable default output and ``--json``. Bad input gives
one line on standard error naming the option, key or file and what was
expected, and exit code 2 — never a traceback.
"""

from __future__ import annotations

import sys
import warnings
from collections.abc import Sequence
from typing import TextIO

import click

from fleetsim import __version__
from fleetsim.cli.common import EXIT_INPUT, fail
from fleetsim.errors import InputError, LifeModelWarning


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="fleetsim")
def cli() -> None:
    """fleetsim: bearing life and fleet maintenance planning.

    Planning estimates only: confirm ratings with the bearing maker, follow
    ISO 281 and local codes, and have safety-critical machinery approved by a
    qualified, licensed engineer.
    """


def _register() -> None:
    # One module per command family; each exposes click commands.
    from fleetsim.cli import fit as fit_cmds
    from fleetsim.cli import importer as import_cmds
    from fleetsim.cli import life as life_cmds
    from fleetsim.cli import scenario as scenario_cmds
    from fleetsim.cli import study as study_cmds

    cli.add_command(life_cmds.life)
    cli.add_command(life_cmds.size)
    cli.add_command(scenario_cmds.check)
    cli.add_command(fit_cmds.fit)
    cli.add_command(import_cmds.import_)
    cli.add_command(study_cmds.run)
    cli.add_command(study_cmds.sweep)


_register()


def _show_warning(message: Warning | str, category: type[Warning], filename: str, lineno: int,
                  file: TextIO | None = None, line: str | None = None) -> None:
    click.echo(f"fleetsim: warning: {message}", err=True)


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``fleetsim`` script; returns the exit code."""
    warnings.showwarning = _show_warning
    warnings.simplefilter("always", LifeModelWarning)
    try:
        cli.main(args=list(argv) if argv is not None else None, standalone_mode=False)
    except click.exceptions.NoArgsIsHelpError as exc:
        click.echo(exc.ctx.get_help() if exc.ctx else str(exc))
        return 0
    except click.UsageError as exc:
        option = ""
        if isinstance(exc, click.BadParameter) and exc.param is not None:
            option = "/".join(exc.param.opts) + ": " if exc.param.opts else ""
        return fail(f"{option}{exc.format_message()}".replace("\n", " "), EXIT_INPUT)
    except InputError as exc:
        return fail(str(exc), EXIT_INPUT)
    except click.exceptions.Abort:
        return fail("aborted", 130)
    except click.exceptions.Exit as exc:
        return int(exc.exit_code)
    except KeyboardInterrupt:
        return fail("interrupted", 130)
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
