"""The service layer's pure parts: typed numbers, station plans, and the doctests of the UI
helpers (keypad editing, water strip)."""

from __future__ import annotations

import doctest

import numpy as np
import pytest

from app import service_util
from app.service_util import ServiceError, next_station, parse_number, uniform_stations


@pytest.mark.parametrize(
    "text, value", [("1.25", 1.25), ("1,25", 1.25), (" 0.5 ", 0.5), ("-2", -2.0), ("3.", 3.0)]
)
def test_typed_numbers(text, value):
    assert parse_number(text, "reading") == value


@pytest.mark.parametrize("text", ["", ".", "1.2.3", "abc", "nan", "inf"])
def test_bad_typed_numbers_name_the_field(text):
    with pytest.raises(ServiceError, match="reading"):
        parse_number(text, "reading")


@pytest.mark.parametrize("distance, count", [(10.0, 11), (9.3, 5), (12.7, 21), (3.0, 2), (25, 30)])
def test_uniform_plan_spans_the_stakes_evenly(distance, count):
    plan = uniform_stations(distance, count)
    steps = np.diff(plan)
    assert plan[0] == 0.0 and plan[-1] == pytest.approx(distance)
    assert np.all(steps > 0)
    # every step but the last is the rounded spacing: a multiple of 0.05 (easy to mark on a tape)
    inner = steps[:-1]
    if inner.size:
        assert np.allclose(inner, inner[0])
        assert inner[0] / 0.05 == pytest.approx(round(inner[0] / 0.05))
    assert steps[-1] >= 0.5 * steps[0] - 1e-9  # no sliver panel at the far stake
    assert abs(len(plan) - count) <= max(2, count // 5)


@pytest.mark.parametrize("distance, count", [(0.0, 5), (-3.0, 5), (10.0, 1)])
def test_impossible_plans_are_refused(distance, count):
    with pytest.raises(ServiceError):
        uniform_stations(distance, count)


def test_next_station_skips_what_is_read():
    plan = [0.0, 0.5, 1.0, 1.5, 2.0]
    assert next_station(plan, {0.0, 0.5}, 0.5) == 1.0
    assert next_station(plan, {0.0, 1.0}, 0.5) == 1.5  # 1.0 was read earlier (an insert)
    assert next_station(plan, {1.5, 2.0}, 2.0) == 0.0  # back to the first gap
    assert next_station(plan, set(plan), 2.0) is None


@pytest.mark.parametrize(
    "module", ["app.service_util", "app.widgets.keypad", "app.widgets.section_view"]
)
def test_docstring_examples(module):
    import importlib

    result = doctest.testmod(importlib.import_module(module))
    assert result.failed == 0 and result.attempted > 0


def test_service_util_has_no_kivy_at_import():
    assert "kivy" not in service_util.__dict__


# --- FieldService on a real store file -------------------------------------------------------
@pytest.fixture
def field(tmp_path):
    """A FieldService on a fresh store file with the demo survey loaded."""
    from app.service import open_service

    service = open_service(str(tmp_path / "device"))
    yield service
    service.close()


def _sloping_visit(service, origin: str) -> str:
    """A visit on a new section whose line falls 0.2 m from the left stake (100.2) to the right
    (100.0) over 10 m, tape from the ``origin`` stake, with six readings."""
    section = service.create_section("Orrin Brook", f"XS-{origin}")
    visit = service.start_visit(section["uuid"], today="2026-11-30")
    service.save_stakes(
        visit, origin=origin, line_left=100.2, line_right=100.0, stake_distance=10.0
    )
    for station, reading in zip(range(0, 11, 2), [0.3, 0.9, 1.4, 1.5, 1.0, 0.4], strict=True):
        service.save_reading(visit, float(station), str(reading))
    return visit


@pytest.mark.parametrize("origin", ["left", "right"])
def test_line_minus_reading_check_runs_on_a_sloping_line(field, origin):
    visit = _sloping_visit(field, origin)
    inputs = field.review_inputs(visit)
    assert inputs["meta"]["stake_distance"] == 10.0
    assert inputs["meta"]["origin"] == origin
    # The store reduced each reading from the sloping line; the check agrees with it (with the
    # origin ignored, a right-hand tape would put the line 0.2 m wrong at the stakes).
    assert not [f for f in field.run_review(inputs) if f["kind"] == "line"]
    # An elevation 0.05 m off line height minus reading is caught at its station.  The line's
    # height there is a straight-line interpolation between the stakes (common practice).
    tampered = dict(inputs, elevations=list(inputs["elevations"]))
    tampered["elevations"][2] += 0.05
    line = [f for f in field.run_review(tampered) if f["kind"] == "line"]
    assert [(f["severity"], f["station"]) for f in line] == [("warn", 4.0)]
    at_four = np.interp(4.0, [0.0, 10.0], [100.2, 100.0] if origin == "left" else [100.0, 100.2])
    assert inputs["elevations"][2] == pytest.approx(at_four - 1.4, abs=1e-9)


def test_checkpoint_empties_the_store_journal(field, tmp_path):
    import os

    wal = tmp_path / "device" / "stakeline.sqlite-wal"
    visit = field.store.visits()[0]["uuid"]
    field.record_water_level(visit, "99.9")
    assert os.path.getsize(wal) > 0
    assert field.checkpoint() is True
    assert not wal.exists() or os.path.getsize(wal) == 0
    field.close()
    assert field.checkpoint() is False  # a closed store: nothing to do, no error


def test_app_checkpoints_when_paused(ui, data_dir):
    import os

    wal = os.path.join(data_dir, "stakeline.sqlite-wal")
    visit = ui.app.service.store.visits()[0]["uuid"]
    ui.app.service.record_water_level(visit, "99.9")
    assert os.path.getsize(wal) > 0
    assert ui.app.on_pause() is True  # keeps running while the tablet shows another app
    assert os.path.getsize(wal) == 0
