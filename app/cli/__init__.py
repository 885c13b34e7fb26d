"""The ``stakeline`` command: no arguments starts the touch app; subcommands do field and office work.

Built on click.  Each module below adds its commands to the group :data:`cli` with
``@cli.command``; shared options are declared once in :mod:`stakeline.app.cli.options`.  The
commands stay a thin layer: parse, call one core function, print.  Errors a person can fix print
one line ``stakeline COMMAND: message`` to stderr and exit with code 2; usage errors print a short
usage and one error line, also with code 2; never a traceback.  Kivy is imported only when the app
starts.
"""

from __future__ import annotations

import importlib
import os
import sys

import click
from stakeline.app.cli.base import EXIT_BAD_INPUT, CommandError, cli

COMMAND_MODULES = (
    "stakeline.app.cli.geometry",
    "stakeline.app.cli.checks",
    "stakeline.app.cli.store",
    "stakeline.app.cli.flow",
    "stakeline.app.cli.rating",
    "stakeline.app.cli.compare",
    "stakeline.app.cli.export",
    "stakeline.app.cli.report",
    "stakeline.app.cli.gauging",
    "stakeline.app.cli.custody",
    "stakeline.app.cli.figures",
    "stakeline.app.cli.ratings",
)
"""Modules that add commands to :data:`cli`, in the order ``stakeline --help`` lists them."""

for _name in COMMAND_MODULES:
    importlib.import_module(_name)

__all__ = ["COMMAND_MODULES", "EXIT_BAD_INPUT", "CommandError", "cli", "main"]


def start_app() -> int:
    """Start the touch app (imports Kivy)."""
    # SDL's own clipboard: without it Kivy probes for xsel/xclip and logs a CRITICAL line on
    # machines that lack them.  Must be set before Kivy is first imported.
    os.environ.setdefault("KIVY_CLIPBOARD", "sdl2")
    from stakeline.app.main import run_app

    return run_app()


def main(argv: list[str] | None = None) -> int:
    """Run the ``stakeline`` command line on ``argv`` (default ``sys.argv[1:]``); returns the
    exit code: 0 done, 1 some package rejected (``import``), 2 bad input."""
    argv = sys.argv[1:] if argv is None else [str(a) for a in argv]
    if not argv:
        return start_app()
    try:
        result = cli.main(args=argv, prog_name="stakeline", standalone_mode=False)
    except click.ClickException as exc:
        exc.show()
        return exc.exit_code
    except click.Abort:
        click.echo("Aborted!", err=True)
        return 1
    return 0 if result is None else int(result)
