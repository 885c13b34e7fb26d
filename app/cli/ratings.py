"""``stakeline measured-rating``: the stage-discharge rating fitted to a section's gaugings.

Every gauged visit of the section in the store gives a measured (stage, discharge) by the same
office analysis the report and the tablet show (:func:`stakeline.analysis.analyse_visit` with
the measurements of :func:`stakeline.measurements.section_measurements`); the rating is fitted
to them and extended above the highest measurement by Manning's equation with the calibrated n.
"""

from __future__ import annotations

import json
import os

from stakeline.app.cli.base import CommandError, cli
from stakeline.app.cli.options import json_option, option, store_option

RATING_KEYS = ("coefficient", "exponent", "offset", "offset_fitted", "offset_source",
               "standard_error", "standard_error_percent", "exponent_error", "low", "high",
               "cautions", "poorly_determined", "measurements", "extension", "extension_note",
               "curve", "unit")  # fmt: skip
"""Keys of ``--json`` from the fit (then ``site``, ``section``, ``section_uuid``, ``visit``,
``date``, ``skipped``, ``caution``)."""


def find_section(store, wanted: str) -> dict:
    """The section named ``wanted`` (any case), or whose id is or uniquely starts with it."""
    sections = store.sections()
    text = wanted.strip()
    found = [s for s in sections if s["uuid"] == text]
    found = found or [s for s in sections if s["name"].casefold() == text.casefold()]
    found = found or [s for s in sections if len(text) >= 4 and s["uuid"].startswith(text)]
    if len(found) == 1:
        return found[0]
    names = ", ".join(sorted({s["name"] for s in sections})) or "none"
    if not found:
        raise CommandError(f"no section {wanted!r} in {store.path}; its sections: {names}")
    raise CommandError(f"{len(found)} sections are named {wanted!r}: give the section's id")


def _visit(store, section: dict, wanted: str | None) -> dict:
    """The visit whose section is analysed: ``wanted``, else the latest gauged visit."""
    from stakeline.measurements import gauged_visits

    gauged = gauged_visits(store, section["uuid"])
    if wanted:
        found = [v for v in store.visits(section["uuid"]) if v["uuid"].startswith(wanted)]
        if len(found) != 1:
            raise CommandError(f"no single visit of {section['name']!r} with id {wanted!r}")
        return store.visit(found[0]["uuid"])
    if not gauged:
        raise CommandError(
            f"section {section['name']!r} has no gauged visit: read velocities at its stations "
            "on the tablet first"
        )
    return store.visit(gauged[-1]["uuid"])


def measured_rating_of(store, section: dict, wanted: str | None, offset, fit_offset):
    """(the ``--json`` dict (see :data:`RATING_KEYS`), the :class:`MeasuredRating`) of a
    section: the office analysis of its chosen visit with every gauged visit's measurement."""
    from stakeline.analysis import AnalysisOptions, analyse_visit
    from stakeline.gauging import CAUTION
    from stakeline.measurements import section_measurements

    visit = _visit(store, section, wanted)
    found = section_measurements(store, section["uuid"], unit=visit["unit"], everything=True)
    usable = [m for m in found if m["discharge"] is not None]
    options = AnalysisOptions(rating_offset=offset, fit_offset=fit_offset)
    result = analyse_visit(visit, store.stations(visit["uuid"]), options,
                           gauging=store.gauging(visit["uuid"]), measurements=usable)  # fmt: skip
    if result.measured_rating is None:
        raise CommandError(result.measured_rating_note or "no measured rating")
    out = result.measured_rating.as_dict()
    out.update(site=section["site"], section=section["name"], section_uuid=section["uuid"],
               visit=visit["uuid"], date=visit["date"], caution=CAUTION)  # fmt: skip
    out["skipped"] = [{"visit": m["visit"], "date": m["date"], "note": m["note"]}
                      for m in found if m["discharge"] is None]  # fmt: skip
    return out, result.measured_rating


def print_rating(found: dict) -> None:
    """The rating as text: the fit, each measurement with its departure, the extension."""
    unit = found["unit"]
    q = f"{unit}³/s"
    print(f"{found['site']} / {found['section']}: measured rating from "
          f"{len(found['measurements'])} gaugings (section of {found['date']})")  # fmt: skip
    print(f"  Q = {found['coefficient']:.4g} (h - {found['offset']:.3f})^{found['exponent']:.3f}"
          f"   e: {found['offset_source']}")  # fmt: skip
    if found["standard_error"] is not None:
        print(f"  standard error {found['standard_error']:.4f} (log), about "
              f"{found['standard_error_percent']:.1f} %")  # fmt: skip
    print(f"  {'date':<10} {'stage':>9} {'discharge':>10} {'departure':>10}")
    for m in found["measurements"]:
        print(f"  {m['date'] or '':<10} {m['stage']:9.3f} {m['discharge']:10.3f} "
              f"{m['departure_percent']:+9.1f}%")  # fmt: skip
    extension = found["extension"]
    if extension is not None:
        print(f"  above {found['high']:.3f} {unit}: Manning's equation, n = {extension['n']:.4f} "
              f"({extension['date']}), S = {extension['slope']:.4f}; at the top "
              f"{extension['stages'][-1]:.3f} {unit}: {extension['discharges'][-1]:.3f} {q}"
              if extension["stages"] else "  no stage above the highest measurement to extend to")  # fmt: skip
    else:
        print(f"  {found['extension_note']}")
    for caution in found["cautions"]:
        print(f"  caution: {caution}")
    for skipped in found["skipped"]:
        print(f"  left out {skipped['date']}: {skipped['note']}")
    print(f"  {found['caution']}")


@cli.command(
    "measured-rating",
    short_help="stage-discharge rating fitted to a section's gauged visits",
    help="Fit Q = C (h - e)^b to the measured discharges of every gauged visit of SECTION in "
    "STORE (WMO-No. 1044; ISO 18320), with e fixed at the section's lowest point (or --offset, "
    "or fitted with --fit-offset), the standard error, each measurement's percent departure, "
    "and the Manning extension above the highest measurement with the calibrated n. Figures "
    "are for checking; wading is dangerous.",
)
@store_option(help="the store file (field or office)")
@option("--section", required=True, metavar="NAME_OR_UUID", help="section name or id")
@option("--visit", metavar="UUID", help="visit whose section is used (default: latest gauged)")
@option("--offset", type=float, metavar="E", help="fix e, the gauge height of zero flow")
@option("--fit-offset", is_flag=True, help="fit e (four gaugings or more)")
@option("--plot", metavar="FILE.png", help="write a plot of the rating (.png or .pdf)")
@json_option("print a JSON object: coefficient, exponent, offset, standard_error, "
             "measurements (stage, discharge, departure_percent), extension ...")  # fmt: skip
def measured_rating(store: str, section: str, visit: str | None, offset: float | None,
                    fit_offset: bool, plot: str | None, as_json: bool) -> int:  # fmt: skip
    """Print (or plot) the measured rating of one section."""
    from stakeline.store import Store

    if offset is not None and fit_offset:
        raise CommandError("give --offset E or --fit-offset, not both")
    if not os.path.isfile(store):
        raise CommandError(f"no store file at {store}; create one with 'stakeline demo' or the app")
    with Store.open(store) as opened:
        chosen = find_section(opened, section)
        found, rating = measured_rating_of(opened, chosen, visit, offset, fit_offset)
    if plot:
        from stakeline.report.gauging_pages import write_measured_rating_plot

        title = f"{chosen['site']} — {chosen['name']}: measured rating"
        write_measured_rating_plot(rating, found["unit"], title, plot)
    if as_json:
        print(json.dumps(found))
    else:
        print_rating(found)
    if plot:
        print(f"wrote {plot}")
    return 0
