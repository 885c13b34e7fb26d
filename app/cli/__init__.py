"""The ``stakeline`` command: no arguments starts the touch app; subcommands do field and office work.

Each group of subcommands lives in its own module with a ``register(subparsers)`` function, so the
CLI stays a thin layer: parse, call one core function, print.  Errors a person can fix print one
line to stderr and exit with code 2; no tracebacks.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys

from stakeline.errors import SurveyError

COMMAND_MODULES = (
    "stakeline.app.cli.geometry",
    "stakeline.app.cli.checks",
    "stakeline.app.cli.store",
    "stakeline.app.cli.office",
)
"""Modules that add subcommands; each defines ``register(subparsers)``."""

EXIT_BAD_INPUT = 2


class CommandError(Exception):
    """A one-line problem to report to the person at the terminal (exit code 2)."""


def build_parser() -> argparse.ArgumentParser:
    """The argument parser with every subcommand registered."""
    parser = argparse.ArgumentParser(
        prog="stakeline",
        description="Stream cross-section surveys: field checks, store, office analysis. "
        "With no command, starts the touch app.",
    )
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMAND_MODULES:
        importlib.import_module(name).register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run the ``stakeline`` command line; returns the exit code."""
    argv = sys.argv[1:] if argv is None else argv
    if not argv:
        # SDL's own clipboard: without it Kivy probes for xsel/xclip and logs a CRITICAL line on
        # machines that lack them.  Must be set before Kivy is first imported.
        os.environ.setdefault("KIVY_CLIPBOARD", "sdl2")
        from stakeline.app.main import run_app

        return run_app()
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "handler", None):
        parser.print_help()
        return EXIT_BAD_INPUT
    try:
        result = args.handler(args)
    except (SurveyError, CommandError) as exc:
        print(f"stakeline {args.command}: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except BrokenPipeError:
        return 0
    return 0 if result is None else int(result)
