"""``stakeline measured-rating`` as a person or a script types it: the JSON contract, the text,
the plot, and one-line errors with exit code 2."""

from __future__ import annotations

import json
import math

import pytest
from stakeline.app.cli import main
from stakeline.store import Store

JSON_KEYS = {"coefficient", "exponent", "offset", "offset_fitted", "offset_source",
             "standard_error", "standard_error_percent", "exponent_error", "low", "high",
             "cautions", "poorly_determined", "measurements", "extension", "extension_note",
             "curve", "unit", "site", "section", "section_uuid", "visit", "date", "skipped",
             "caution"}  # fmt: skip
MEASUREMENT_KEYS = {"visit", "date", "stage", "discharge", "departure_percent", "plus_minus",
                    "n", "n_plus_minus", "slope"}  # fmt: skip


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    path = tmp_path_factory.mktemp("ratings") / "demo.db"
    with Store.open(path) as store:
        store.load_demo()
    return str(path)


def run(capsys, *argv) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def test_json_has_the_fit_the_measurements_and_the_extension(demo, capsys):
    code, out, err = run(capsys, "measured-rating", "--store", demo, "--section", "XS1 riffle",
                         "--json")  # fmt: skip
    assert code == 0 and err == ""
    found = json.loads(out)
    assert set(found) == JSON_KEYS
    assert len(found["measurements"]) == 5 and found["skipped"] == []
    assert all(set(m) == MEASUREMENT_KEYS for m in found["measurements"])
    # Each departure is 100·(Q − Qc)/Qc from the printed curve (WMO-No. 1044).
    for m in found["measurements"]:
        qc = found["coefficient"] * (m["stage"] - found["offset"]) ** found["exponent"]
        assert m["departure_percent"] == pytest.approx(100 * (m["discharge"] - qc) / qc)
    extension = found["extension"]
    assert extension["n"] > 0 and extension["slope"] > 0 and extension["stages"]
    assert min(extension["stages"]) > found["high"]
    assert set(found["curve"]) == {"stages", "discharges", "source"}
    assert found["offset_source"] == "the lowest point of the section"
    assert math.isfinite(found["standard_error"])


def test_text_names_each_measurement_and_the_cautions(demo, capsys):
    code, out, _ = run(capsys, "measured-rating", "--store", demo, "--section", "xs1 RIFFLE")
    assert code == 0
    assert "Q = " in out and "standard error" in out and "Manning's equation" in out
    assert out.count("%") >= 6 and "licensed engineering review" in out


def test_offset_given_or_fitted(demo, capsys):
    _, out, _ = run(capsys, "measured-rating", "--store", demo, "--section", "XS1 riffle",
                    "--offset", "99.4", "--json")  # fmt: skip
    assert json.loads(out)["offset"] == 99.4 and json.loads(out)["offset_source"] == "given"
    _, out, _ = run(capsys, "measured-rating", "--store", demo, "--section", "XS1 riffle",
                    "--fit-offset", "--json")  # fmt: skip
    assert json.loads(out)["offset_fitted"] is True


def test_plot_is_written(demo, capsys, tmp_path):
    target = tmp_path / "rating.png"
    code, out, _ = run(capsys, "measured-rating", "--store", demo, "--section", "XS1 riffle",
                       "--plot", target)  # fmt: skip
    assert code == 0 and f"wrote {target}" in out
    assert target.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


@pytest.mark.parametrize(
    "argv, message",
    [
        (["--section", "XS9"], "no section 'XS9'"),
        (["--section", "XS2 pool"], "has no gauged visit"),
        (["--section", "XS1 riffle", "--offset", "99.9"], "not above e = 99.9"),
        (["--section", "XS1 riffle", "--offset", "99", "--fit-offset"], "not both"),
        (["--section", "XS1 riffle", "--visit", "zzzz"], "no single visit"),
        (["--section", "XS1 riffle", "--plot", "{tmp}/rating.txt"], ".png or .pdf"),
    ],
)
def test_bad_input_is_one_line_and_exit_2(demo, capsys, tmp_path, argv, message):
    argv = [a.format(tmp=tmp_path) for a in argv]
    code, out, err = run(capsys, "measured-rating", "--store", demo, *argv)
    assert code == 2 and out == "" and message in err
    assert err.count("\n") == 1 and err.startswith("stakeline measured-rating: ")


def test_missing_store_and_too_few_gaugings(capsys, tmp_path):
    code, _, err = run(capsys, "measured-rating", "--store", tmp_path / "none.db", "--section",
                       "x")  # fmt: skip
    assert code == 2 and "no store file" in err
    path = tmp_path / "two.db"
    with Store.open(path) as store:
        site = store.create_site("Orrin Brook")
        section = store.create_section(site["uuid"], "XS-A")
        for date, level in (("2026-05-01", 99.2), ("2026-06-01", 99.4)):
            visit = store.start_visit(section["uuid"], date, line_left=100.0, line_right=100.0)
            uuid = visit["uuid"]
            for station, reading in ((0, 0.5), (1, 1.0), (2, 1.4), (3, 1.0), (4, 0.5)):
                store.save_station(uuid, float(station), reading)
            store.add_water_level(uuid, level)
            for station in (1.0, 2.0, 3.0):
                store.save_velocity(uuid, station, "one-point", {"v06": {"velocity": 0.5}})
    code, _, err = run(capsys, "measured-rating", "--store", path, "--section", "XS-A")
    assert code == 2 and "at least 3 gauged visits" in err and err.count("\n") == 1
