"""The ``stakeline`` click group, its command class and the one-line error policy.

Every command module decorates its commands with ``@cli.command(...)``; this module holds what
they share: errors a person can fix become one line ``stakeline COMMAND: message`` on stderr with
exit code 2, options may be abbreviated to any unique start (as the command line always allowed),
and options of one concern (roughness, energy slope) are listed under their own heading in --help.
"""

from __future__ import annotations

import os
import unicodedata
from collections.abc import Sequence

import click
import numpy as np
from stakeline.errors import SurveyError

EXIT_BAD_INPUT = 2
"""Exit code of bad input: a usage error, a malformed file, a value out of range."""

CONTEXT = {"help_option_names": ["-h", "--help"], "max_content_width": 100}


class CommandError(Exception):
    """A one-line problem to report to the person at the terminal (exit code 2)."""


_UNSAFE = {"Cc", "Cf", "Cs", "Co", "Cn", "Zl", "Zp"}


def shown(value: object) -> str:
    """``value`` as text that is safe to print on a terminal, on one line.

    Control and format characters (escape sequences, line breaks, bidirectional overrides) are
    shown escaped as Python writes them, so a name read from a package or a store can neither
    drive the terminal nor pose as a line of its own.

    >>> shown("XS1\\x1b[2J riffle\\nfake line")
    'XS1\\\\x1b[2J riffle\\\\nfake line'
    >>> shown(None), shown("Tessaly Creek")
    ('', 'Tessaly Creek')
    """
    text = "" if value is None else str(value)
    if text.isprintable():
        return text
    return "".join(repr(c)[1:-1] if unicodedata.category(c) in _UNSAFE else c for c in text)


class OneLineError(click.ClickException):
    """A :class:`SurveyError` or :class:`CommandError`, shown as ``stakeline COMMAND: message``."""

    exit_code = EXIT_BAD_INPUT

    def show(self, file=None) -> None:
        """Print the one line (no "Error:" prefix, no usage) to stderr."""
        click.echo(shown(self.message), err=True)


EXIT_DEFECT = 3
"""Exit code when Stakeline itself failed (a defect to report), not the input."""


class DefectError(OneLineError):
    """An unexpected failure inside Stakeline, shown as one line that asks for a report."""

    exit_code = EXIT_DEFECT


class GroupedOption(click.Option):
    """An option listed in --help under ``group`` (e.g. "Roughness (Manning's n)")."""

    def __init__(self, *args, group: str | None = None, **kwargs):
        super().__init__(*args, **kwargs)
        self.group = group


class DescribedArgument(click.Argument):
    """A positional argument listed in --help with a one-line ``description``."""

    def __init__(self, *args, description: str = "", **kwargs):
        super().__init__(*args, **kwargs)
        self.description = description


def expand_abbreviations(args: Sequence[str], names: Sequence[str]) -> list[str]:
    """``args`` with each long option written as a unique start of its name spelled out.

    >>> expand_abbreviations(["--sta", "3", "--s", "--j=1", "--", "--sta"], ["--stage", "--step", "--json"])
    ['--stage', '3', '--s', '--json=1', '--', '--sta']
    """
    out: list[str] = []
    for i, arg in enumerate(args):
        if arg == "--":
            out.extend(args[i:])
            break
        name, equals, value = arg.partition("=")
        if name.startswith("--") and len(name) > 2 and name not in names:
            found = [n for n in names if n.startswith(name)]
            if len(found) == 1:
                arg = found[0] + equals + value
        out.append(arg)
    return out


NUMBER_TROUBLE = (
    "the numbers given lead to a figure that is undefined or too large to hold ({}); check "
    "the values typed and in the file"
)


def run_one_line(ctx: click.Context, invoke):
    """``invoke(ctx)`` with the one-line error policy: a :class:`SurveyError` or
    :class:`CommandError` becomes ``stakeline COMMAND: message`` (exit 2), and so does a
    floating-point overflow or undefined result that the input led to (numpy is set to raise
    rather than print a warning)."""
    try:
        with np.errstate(over="raise", invalid="raise", divide="raise", under="ignore"):
            return invoke(ctx)
    except (SurveyError, CommandError) as exc:
        raise OneLineError(f"{ctx.command_path}: {exc}") from None
    except (FloatingPointError, OverflowError) as exc:
        raise OneLineError(f"{ctx.command_path}: {NUMBER_TROUBLE.format(exc)}") from None
    except BrokenPipeError:  # the reader (head, less) went away: nothing more to say
        return 0
    except OSError as exc:  # the disk or the system refused: say what, where
        where = f" ({exc.filename})" if getattr(exc, "filename", None) else ""
        raise OneLineError(
            f"{ctx.command_path}: {exc.strerror or exc}{where}; check the path, the free space "
            "and the permissions"
        ) from None
    except (click.ClickException, click.exceptions.Exit, click.Abort):
        raise  # already said (a subcommand's own line) or click's own handling
    except Exception as exc:
        if os.environ.get("STAKELINE_DEBUG"):
            raise
        raise DefectError(
            f"{ctx.command_path}: Stakeline failed unexpectedly ({type(exc).__name__}: {exc}); "
            "nothing was changed by the failed step. Please report this with the command you "
            "ran (STAKELINE_DEBUG=1 shows the details)"
        ) from None


class StakelineCommand(click.Command):
    """A subcommand: one-line errors, abbreviated options, grouped option help."""

    def __init__(self, *args, **kwargs):
        kwargs.setdefault("context_settings", dict(CONTEXT))
        super().__init__(*args, **kwargs)

    def parse_args(self, ctx: click.Context, args: list[str]) -> list[str]:
        """Parse ``args`` after spelling out abbreviated long options."""
        names = [o for p in self.get_params(ctx) for o in (*p.opts, *p.secondary_opts)]
        longs = [n for n in names if n.startswith("--")]
        return super().parse_args(ctx, expand_abbreviations(args, longs))

    def invoke(self, ctx: click.Context):
        """Run the command; input errors become one line on stderr and exit code 2."""
        return run_one_line(ctx, super().invoke)

    def format_options(self, ctx: click.Context, formatter: click.HelpFormatter) -> None:
        """List the arguments, then the options, those of one group under the group's heading."""
        sections: dict[str, list[tuple[str, str]]] = {"Arguments": [], "Options": []}
        for param in self.get_params(ctx):
            if isinstance(param, click.Argument):
                described = getattr(param, "description", "")
                sections["Arguments"].append((param.human_readable_name, described))
                continue
            record = param.get_help_record(ctx)
            if record is not None:
                sections.setdefault(getattr(param, "group", None) or "Options", []).append(record)
        for title, rows in sections.items():
            if rows:
                with formatter.section(title):
                    formatter.write_dl(rows)


class StakelineGroup(click.Group):
    """The ``stakeline`` group: commands listed in the order they were added."""

    command_class = StakelineCommand

    def list_commands(self, ctx: click.Context) -> list[str]:
        """Command names in the order the modules add them (field work first, office last)."""
        return list(self.commands)


class StakelineSubgroup(StakelineGroup):
    """A command with subcommands (``stakeline devices trust``); its own callback and its
    subcommands keep the one-line error policy."""

    def __init__(self, *args, **kwargs):
        kwargs.setdefault("context_settings", dict(CONTEXT))
        super().__init__(*args, **kwargs)

    def invoke(self, ctx: click.Context):
        """Run the group's callback, then the subcommand, with one-line errors."""
        return run_one_line(ctx, super().invoke)


@click.group(
    cls=StakelineGroup,
    context_settings=CONTEXT,
    help="Stream cross-section surveys: field checks, store, office analysis. "
    "With no command, starts the touch app.",
)
def cli() -> None:
    """The ``stakeline`` command group (``stakeline --help`` lists every command)."""
