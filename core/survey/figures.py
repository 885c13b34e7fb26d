"""One table of the figures Stakeline computes: key, plain label, kind of unit and formula.

The geometry (:meth:`stakeline.survey.geometry.Section.at`), the hydraulics
(:class:`stakeline.survey.hydraulics.Flow`), the rating table, the bankfull summary and the
comparison of visits name their figures by the keys here; every front end (report, tablet,
command line) takes the words and the unit symbol from this table.

>>> figure_label("hydraulic_radius"), figure_unit("hydraulic_radius", "ft")
('hydraulic radius', 'ft')
>>> figure_heading("discharge", "m")
'discharge (m³/s)'
>>> figure_title("velocity"), FIGURE_TABLE["velocity"].formula
('Mean velocity', 'Q/A')
"""

from __future__ import annotations

from dataclasses import dataclass

from stakeline.survey.units import unit_of


@dataclass(frozen=True)
class FigureName:
    """How one figure is named and measured.

    Attributes
    ----------
    key : str
        The name the domain uses (a dict key, a dataclass field, a ``--json`` key).
    label : str
        Plain words, lower case unless a proper name ("Froude number").
    kind : str
        Kind of unit (see :data:`stakeline.survey.units.KINDS`): ``"length"``, ``"area"``,
        ``"discharge"``, ``"velocity"``, ``"shear_stress"``, ``"stream_power"`` or ``"none"``.
    formula : str
        How it is found, in symbols ("A/T"); empty when it is read directly.
    """

    key: str
    label: str
    kind: str = "length"
    formula: str = ""

    @property
    def power(self) -> str:
        """``"²"`` for an area, ``""`` for a length, None for any other kind (for tables that
        print the survey unit with a power)."""
        return {"area": "²", "length": ""}.get(self.kind)


_NAMES = (
    FigureName("stage", "water level"),
    FigureName("area", "wetted area", "area", "A"),
    FigureName("wetted_perimeter", "wetted perimeter", "length", "P"),
    FigureName("top_width", "top width", "length", "T"),
    FigureName("hydraulic_radius", "hydraulic radius", "length", "R = A/P"),
    FigureName("hydraulic_depth", "hydraulic depth", "length", "D = A/T"),
    FigureName("max_depth", "deepest water"),
    FigureName("conveyance", "conveyance", "discharge", "K = Q/√S"),
    FigureName("discharge", "discharge", "discharge", "Q"),
    FigureName("velocity", "mean velocity", "velocity", "Q/A"),
    FigureName("froude", "Froude number", "none", "V/√(gD)"),
    FigureName("shear_stress", "shear stress", "shear_stress", "γRS"),
    FigureName("stream_power", "unit stream power", "stream_power", "γQS/T"),
    FigureName("width", "bankfull width"),
    FigureName("mean_depth", "mean depth", "length", "A/T"),
    FigureName("width_depth_ratio", "width/depth ratio", "none", "T/D"),
    FigureName("scour_area", "scour (bed lowered)", "area"),
    FigureName("fill_area", "fill (bed raised)", "area"),
    FigureName("net_change", "net change (fill - scour)", "area"),
    FigureName("deepest_shift", "deepest point moved along the tape"),
    FigureName("deepest_change", "deepest bed elevation change"),
    FigureName("area_change", "wetted area change at this level", "area"),
    FigureName("top_width_change", "top width change at this level"),
)

FIGURE_TABLE: dict[str, FigureName] = {name.key: name for name in _NAMES}
"""Every figure by key, in the order a report lists them."""


def _name(key: str) -> FigureName:
    return FIGURE_TABLE.get(key) or FigureName(key, key.replace("_", " "))


def figure_label(key: str) -> str:
    """Plain words for figure ``key`` (an unknown key: its words, underscores as spaces).

    Examples
    --------
    >>> figure_label("max_depth")
    'deepest water'
    """
    return _name(key).label


def figure_title(key: str) -> str:
    """The label with a capital first letter, for a screen.

    >>> figure_title("area")
    'Wetted area'
    """
    label = _name(key).label
    return label[:1].upper() + label[1:]


def figure_unit(key: str, unit: str) -> str:
    """Unit symbol of figure ``key`` in survey unit ``unit`` (``""`` when dimensionless).

    An unknown key is taken as a length.

    Examples
    --------
    >>> figure_unit("discharge", "ft"), figure_unit("top_width", "m"), figure_unit("froude", "m")
    ('ft³/s', 'm', '')
    """
    return unit_of(unit).symbol(_name(key).kind)


def figure_heading(key: str, unit: str) -> str:
    """``"label (unit)"`` for a column heading; a dimensionless figure has no brackets.

    >>> figure_heading("froude", "m")
    'Froude number'
    """
    symbol = figure_unit(key, unit)
    return f"{figure_label(key)} ({symbol})" if symbol else figure_label(key)
