"""Fuzzing the package reader's gauging records (hypothesis): a gauged visit's package mutated
field by field -- meters, velocity versions and their points, water-surface versions, the
gauging settings -- and signed again with a test key the office trusts.  The only outcomes
allowed are a merge, a hold, or a rejection with a one-line message; whatever merges reads back
and is analysed (figures, or Stakeline's own error), never a crash."""

from __future__ import annotations

import json

import pytest
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st
from stakeline.analysis import AnalysisOptions, analyse_visit
from stakeline.errors import SurveyError
from stakeline.store import Store
from stakeline.store.package import PackageError, import_file, parse_package
from stakeline.store.records import GAUGING_LISTS
from test_package_fuzz import _forged, json_values

OUTCOMES = {"imported", "updated", "present", "conflict", "held", "rejected"}

values = st.one_of(
    json_values,
    st.floats(min_value=-100.0, max_value=200.0),  # plausible numbers, so that some merge
    st.integers(min_value=-5, max_value=100),
    st.sampled_from(["one-point", "two-point", "surface", "meansection", "rotating", ""]),
)


@pytest.fixture(scope="module")
def world(tmp_path_factory):
    """A field store with the demo survey, the records of a gauged riffle visit and its key."""
    folder = tmp_path_factory.mktemp("fuzz-gauging")
    field = Store.open(folder / "field.db", device_id="tablet-F")
    field.load_demo()
    visit = next(v["uuid"] for v in field.visits() if v["date"] == "2026-11-24")
    key_file = folder / "tablet-F.stakeline-device-key.json"
    field.export_device_key(key_file)
    yield {"field": field, "records": field.visit_records(visit), "key_file": key_file,
           "folder": folder, "visit": visit}  # fmt: skip
    field.close()


def _reads_back_and_analyses(office: Store) -> None:
    for listed in office.visits():
        uuid = listed["uuid"]
        visit = office.visit(uuid)
        gauging = office.gauging(uuid)
        for vertical in gauging["verticals"]:
            office.velocity_history(vertical["uuid"])
        for point in gauging["water_surface"]:
            office.water_surface_history(point["uuid"])
        try:
            result = analyse_visit(visit, office.stations(uuid), AnalysisOptions(),
                                   gauging=gauging, measurements=[])  # fmt: skip
        except SurveyError:
            continue  # a visit the analysis refuses with its own one-line error
        if result.gauging is not None:
            result.gauging.as_dict()
            json.dumps(result.gauging.as_dict(), allow_nan=False)


def _mutate(records: dict, data, value, drop: bool) -> None:
    kind = data.draw(st.sampled_from([*GAUGING_LISTS, "points", "settings"]), label="kind")
    if kind == "settings":
        target = records["visit"]["settings"].setdefault("gauging", {})
    else:
        rows = records["velocity_versions" if kind == "points" else kind]
        row = rows[data.draw(st.integers(0, len(rows) - 1), label="row")]
        target = row
        if kind == "points":
            points = row["points"]
            name = data.draw(st.sampled_from(sorted(points) + ["v02", "bed"]), label="point")
            target = points.setdefault(name, {})
    field = data.draw(
        st.sampled_from(sorted(target) + ["extra", "velocity", "revolutions", "seconds",
                                          "method", "surface_coefficient"]),
        label="field",
    )  # fmt: skip
    if drop and field in target:
        del target[field]
    else:
        target[field] = value


@settings(
    max_examples=150,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)
@given(data=st.data(), value=values, drop=st.booleans())
def test_gauging_records_mutated_and_signed_again(world, data, value, drop):
    records = json.loads(json.dumps(world["records"]))
    _mutate(records, data, value, drop)
    try:
        package = _forged(records, world["visit"], world["field"].signing_key())
    except ValueError:
        return  # not even JSON (a non-finite float): no file could hold it
    try:
        parse_package(package)
    except PackageError as exc:
        assert "\n" not in str(exc) and str(exc)
    path = world["folder"] / "mutated.stakeline-visit.json"
    path.write_bytes(package)
    office = Store.memory(device_id="office")
    office.trust_device(world["key_file"], by="fuzz")
    try:
        result = import_file(office, path)
        assert result["status"] in OUTCOMES
        event(result["status"])
        assert "\n" not in result["message"] and "Traceback" not in result["message"]
        _reads_back_and_analyses(office)
    finally:
        office.close()
