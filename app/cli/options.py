"""Options shared by several commands, each declared once and applied as a decorator.

The roughness options (``--n --roughness --n-overbank --split --bank-tops``) reach a command as
one :class:`Roughness` value, the energy-slope options (``--slope --water-levels --reach``) as one
:class:`Slope`; each knows how to turn what was typed into the numbers the core takes.
"""

from __future__ import annotations

import functools
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import click
from stakeline.analysis import AnalysisOptions
from stakeline.app.cli.base import CommandError, DescribedArgument, GroupedOption
from stakeline.survey.hydraulics import slope_from_water_levels
from stakeline.survey.numbers import parse_number
from stakeline.survey.roughness import RoughnessRow, roughness, row_for_n

UNIT_SYSTEMS = {"si": "m", "us": "ft"}
"""``--units`` of the office commands: unit system -> length unit of the section file."""

ROUGHNESS_GROUP = "Roughness (Manning's n)"
SLOPE_GROUP = "Energy slope"


def option(*names: str, group: str | None = None, **attrs) -> Callable:
    """``click.option`` listed under ``group`` in --help (None: the command's own options)."""
    return click.option(*names, cls=GroupedOption, group=group, **attrs)


def apply(options: Sequence[Callable]) -> Callable:
    """A decorator applying ``options`` so --help lists them in the order given."""

    def decorate(command: Callable) -> Callable:
        for add in reversed(options):
            command = add(command)
        return command

    return decorate


def argument(name: str, description: str, **attrs) -> Callable:
    """``click.argument`` with a line of help (listed under "Arguments" in --help)."""
    return click.argument(name, cls=DescribedArgument, description=description, **attrs)


def file_argument(required: bool = True) -> Callable:
    """The section file ``FILE.csv`` (columns station, elevation; optional code, reading)."""
    return argument(
        "file",
        "section file: columns station, elevation (optional code, reading)",
        metavar="FILE.csv" if required else "[FILE.csv]",
        required=required,
    )


def json_option(help: str) -> Callable:
    """``--json``: print machine-readable JSON instead of text (parameter ``as_json``)."""
    return option("--json", "as_json", is_flag=True, help=help)


def stage_option(help: str = "water level (elevation)", required: bool = False) -> Callable:
    """``--stage S``: the water level, an elevation in the section's unit."""
    return option("--stage", type=float, required=required, metavar="S", help=help)


def units_option(help: str) -> Callable:
    """``--units si|us``: metres or feet for a section file (office commands)."""
    return option("--units", type=click.Choice(sorted(UNIT_SYSTEMS)), default="si", help=help)


def step_option(help: str = "rating water level step") -> Callable:
    """``--step C``: water level step of a rating table."""
    return option("--step", type=float, metavar="C", help=help)


def store_option(metavar: str = "STORE", help: str = "the store file") -> Callable:
    """``--store``: a required store file (field or office)."""
    return option("--store", required=True, metavar=metavar, help=help)


def visit_options(many: bool = False) -> Callable:
    """``--store STORE --visit UUID``: one visit of a store (``many``: ``--visit`` given twice)."""
    return apply(
        [
            option("--store", metavar="STORE", help="a Stakeline store file"),
            option("--visit", metavar="UUID", multiple=many,
                   help="visit id (or a unique start of it)" + ("; give twice" if many else "")),
        ]
    )  # fmt: skip


# --- roughness -------------------------------------------------------------------------------


@dataclass(frozen=True)
class Roughness:
    """Manning's n as typed: ``--n``, ``--roughness KEY``, ``--n-overbank``, ``--split``,
    ``--bank-tops`` (stations in the section's unit)."""

    n: float | None = None
    key: str | None = None
    n_overbank: float | None = None
    splits: tuple[float, ...] = ()
    bank_tops: bool = False

    def channel(self) -> tuple[float | None, RoughnessRow | None]:
        """n of the main channel and its roughness-table row; ``(None, None)`` when not given."""
        n = parse_number(self.n, "Manning's n", positive=True, optional=True)
        if self.key:
            row = roughness(self.key)
            return (row.normal if n is None else n), row
        if n is None:
            return None, None
        return n, row_for_n(n)

    def split_option(self, from_codes: bool) -> tuple[float, ...] | None:
        """Split stations for :class:`~stakeline.analysis.AnalysisOptions`: ``--split``; else
        None (the analysis splits at the coded bank tops) for store visits or ``--bank-tops``;
        else no split."""
        if self.splits:
            return tuple(sorted(parse_number(s, "--split station") for s in self.splits))
        return None if (from_codes or self.bank_tops) else ()


def roughness_options(command: Callable) -> Callable:
    """Add the roughness options; the command receives them as ``roughness: Roughness``."""

    @functools.wraps(command)
    def run(*args, n, roughness, n_overbank, split, bank_tops, **kwargs):
        chosen = Roughness(n, roughness, n_overbank, tuple(split), bank_tops)
        return command(*args, roughness=chosen, **kwargs)

    group = ROUGHNESS_GROUP
    return apply(
        [
            option("--n", type=float, metavar="N", group=group,
                   help="Manning's n of the main channel"),
            option("--roughness", metavar="KEY", group=group,
                   help="a row of the roughness table (see `stakeline roughness`)"),
            option("--n-overbank", type=float, metavar="N", group=group,
                   help="n of the overbanks (default: as the channel)"),
            option("--split", type=float, multiple=True, metavar="STATION", group=group,
                   help="split the section here (repeat; default for store visits: the bank tops)"),
            option("--bank-tops", is_flag=True, group=group,
                   help="split a section file at its stations coded bank_top (column code)"),
        ]
    )(run)  # fmt: skip


# --- energy slope ----------------------------------------------------------------------------


@dataclass(frozen=True)
class Slope:
    """The energy slope as typed: ``--slope``, or ``--water-levels UP DOWN`` with ``--reach``."""

    slope: float | None = None
    water_levels: tuple[float, float] | None = None
    reach: float | None = None

    def value(self) -> float | None:
        """The slope (unit/unit), from the water levels when given; None when not given."""
        if self.slope is not None and self.water_levels:
            raise CommandError("give --slope or --water-levels with --reach, not both")
        if self.water_levels:
            if self.reach is None:
                raise CommandError(
                    "--water-levels needs --reach (the distance between the two sections)"
                )
            return slope_from_water_levels(self.water_levels[0], self.water_levels[1], self.reach)
        return parse_number(self.slope, "slope", positive=True, optional=True)


def slope_options(command: Callable) -> Callable:
    """Add the energy-slope options; the command receives them as ``slope: Slope``."""

    @functools.wraps(command)
    def run(*args, slope, water_levels, reach, **kwargs):
        return command(*args, slope=Slope(slope, water_levels, reach), **kwargs)

    group = SLOPE_GROUP
    return apply(
        [
            option("--slope", type=float, metavar="S", group=group,
                   help="energy slope (m/m or ft/ft)"),
            option("--water-levels", type=float, nargs=2, metavar="UP DOWN", group=group,
                   help="water levels read at an upstream and a downstream section"),
            option("--reach", type=float, metavar="L", group=group,
                   help="distance between those two sections"),
        ]
    )(run)  # fmt: skip


def flow_inputs(roughness: Roughness, slope: Slope) -> tuple[float, float, RoughnessRow | None]:
    """n, slope and roughness row for a discharge; a one-line error names what is missing."""
    n, row = roughness.channel()
    value = slope.value()
    if n is None:
        raise CommandError("Manning's n is needed: give --n N or --roughness KEY")
    if value is None:
        raise CommandError(
            "the energy slope is needed: give --slope S, or --water-levels UP DOWN --reach L"
        )
    return n, value, row


def analysis_options(
    roughness: Roughness, slope: Slope, from_codes: bool, **more
) -> AnalysisOptions:
    """The :class:`~stakeline.analysis.AnalysisOptions` of what was typed: n, the overbanks'
    n, splits (see :meth:`Roughness.split_option`), slope, and ``more`` (stage, bankfull...).
    Each number is checked here so a message names the option."""
    roughness.channel()  # checks --n and --roughness, naming the option at fault
    n = parse_number(roughness.n, "Manning's n", positive=True, optional=True)
    overbank = parse_number(
        roughness.n_overbank, "Manning's n of the overbanks (--n-overbank)", positive=True,
        optional=True,
    )  # fmt: skip
    return AnalysisOptions(
        n=n, roughness=roughness.key, n_overbank=overbank, slope=slope.value(),
        splits=roughness.split_option(from_codes), **more,
    )  # fmt: skip
