"""What the command line prints from untrusted sources, and the messages of bad input.

Names in a package (site, section, device) reach the office terminal: control characters
must be shown escaped, never sent to the terminal, while ``--json`` stays exact JSON.  Numbers
that make no sense get one plain line naming the option; read-only stores can still be read.
"""

from __future__ import annotations

import json
import os
import re
import shutil
import subprocess
from pathlib import Path

import pytest
from stakeline.app.cli import main
from stakeline.store import Store

SITE = "Creek\x1b[2J\x1b]0;owned\x07 at \u202eford"
SECTION = "XS1\nstakeline: all visits verified"
DEVICE = "tab\x1b[31mlet\r-9"
CONTROL = re.compile("[\x00-\x08\x0b-\x1f\x7f\u202e]")


def run(capsys, *argv) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def write(path: Path, text: str) -> Path:
    path.write_text(text)
    return path


@pytest.fixture
def section_file(tmp_path):
    return write(tmp_path / "xs.csv", "station,elevation,code\n0,101,\n0.5,100.5,bank_top\n"
                 "2,99.2,\n4,99.0,\n6,99.3,\n7.5,100.6,bank_top\n8,101.1,\n")  # fmt: skip


# --- item 7: a range of water levels that is not finite --------------------------------------
@pytest.mark.parametrize(
    ("argv", "option"),
    [(["--from", "nan", "--to", "100", "--step", "0.5"], "--from"),
     (["--from", "99", "--to", "inf", "--step", "0.5"], "--to"),
     (["--from", "-inf", "--to", "100", "--step", "0.5"], "--from"),
     (["--from", "99", "--to", "100", "--step", "nan"], "--step")],
)  # fmt: skip
def test_table_range_that_is_not_finite_is_one_line(capsys, section_file, argv, option):
    code, out, err = run(capsys, "table", section_file, *argv)
    assert code == 2 and out == "" and err.count("\n") == 1
    assert err.startswith(f"stakeline table: {option} ") and "not a finite number" in err


# --- item 11: names from packages are printed safely -----------------------------------------
@pytest.fixture
def hostile_names(tmp_path, capsys):
    """An office holding a visit whose site, section and device names carry escape
    sequences, imported from a signed package of a device it was told to trust."""
    field, office = tmp_path / "field.db", tmp_path / "office.db"
    with Store.open(field, device_id=DEVICE) as store:
        site = store.create_site(SITE, "", "")
        section = store.create_section(site["uuid"], SECTION, "L", "R")
        visit = store.start_visit(section["uuid"], "2026-04-14", (), "m", 101.0, 101.0)
        for station, reading in [(0, 0.2), (2, 1.5), (4, 0.3)]:
            store.save_station(visit["uuid"], station, reading)
        store.finish_visit(visit["uuid"])
        store.export_device_key(tmp_path / "key.json")
    assert run(capsys, "pack", "--store", field, "--outbox", tmp_path / "out")[0] == 0
    return tmp_path, office


def test_names_from_a_package_cannot_drive_the_terminal(hostile_names, capsys):
    folder, office = hostile_names
    code, out, err = run(capsys, "import", folder / "out", "--into", office)
    assert code == 1 and not CONTROL.search(out + err)  # held: untrusted, its device named
    code, out, _ = run(capsys, "conflicts", "--store", office)
    assert code == 0 and not CONTROL.search(out)
    assert "tab\\x1b[31mlet\\r-9" in out  # shown escaped, so a person sees what was there
    code, out, _ = run(capsys, "devices", "trust", folder / "key.json", "--into", office)
    assert code == 0 and not CONTROL.search(out)
    code, out, _ = run(capsys, "visits", "--store", office)
    assert code == 0 and not CONTROL.search(out) and len(out.splitlines()) == 1
    assert "Creek\\x1b[2J\\x1b]0;owned\\x07 at \\u202eford / XS1\\nstakeline" in out
    code, out, _ = run(capsys, "devices", "--store", office)
    assert code == 0 and not CONTROL.search(out)


def test_json_output_keeps_the_names_exactly(hostile_names, capsys):
    folder, office = hostile_names
    run(capsys, "import", folder / "out", "--into", office)
    code, out, _ = run(capsys, "conflicts", "--store", office, "--json")
    (held,) = json.loads(out)
    assert held["device"] == DEVICE and held["status"] == "held"
    assert not CONTROL.search(out)  # JSON escapes them itself
    run(capsys, "devices", "trust", folder / "key.json", "--into", office)
    code, out, _ = run(capsys, "visits", "--store", office, "--json")
    (visit,) = json.loads(out)
    assert (visit["site"], visit["section"]) == (SITE, SECTION)
    code, out, _ = run(capsys, "figures", "--store", office, "--visit", visit["uuid"], "--json")
    assert code == 0 and repr(DEVICE) in json.loads(out)["signed_by"]  # quoted, escaped
    code, out, _ = run(capsys, "export", "--store", office, "--visit", visit["uuid"], "--out",
                       folder / "x")  # fmt: skip
    assert code == 0 and not CONTROL.search(out)
    for path in (folder / "x").iterdir():  # file names from the names: letters and digits
        assert re.fullmatch(r"[a-z0-9-]+_[a-z0-9-]+_2026-04-14_stations\.csv", path.name)
        first = path.read_text().splitlines()[0]
        assert first.startswith("# signed by device ") and not CONTROL.search(first)


def test_an_error_naming_a_hostile_path_stays_one_line(tmp_path, capsys):
    code, out, err = run(capsys, "visits", "--store", tmp_path / "a\x1b[2J\nb.db")
    assert code == 2 and err.count("\n") == 1 and not CONTROL.search(err[:-1])


# --- item 13: messages -----------------------------------------------------------------------
@pytest.mark.parametrize("command", ["flow", "rating"])
def test_overbank_n_of_zero_is_said_plainly(capsys, section_file, command):
    stage = ["--stage", "100"] if command == "flow" else []
    code, _, err = run(capsys, command, section_file, *stage, "--n", "0.03", "--slope", "0.001",
                       "--bank-tops", "--n-overbank", "0")  # fmt: skip
    assert code == 2 and err.count("\n") == 1
    assert "n of the overbanks (--n-overbank) must be a positive number, got 0" in err
    assert "np." not in err


@pytest.mark.parametrize(
    "argv",
    [["table", "{file}", "--from", "99", "--to", "100", "--step", "1e-300"],
     ["rating", "{file}", "--n", "0.03", "--slope", "0.001", "--step", "1e-300"]],
)  # fmt: skip
def test_a_tiny_step_gives_a_readable_count(capsys, section_file, argv):
    code, _, err = run(capsys, *(a.format(file=section_file) for a in argv))
    assert code == 2 and err.count("\n") == 1 and len(err) < 200
    assert not re.search(r"\d{20}", err) and "use a larger step" in err


@pytest.mark.parametrize("command", ["section", "table", "flow", "check"])
def test_row_errors_name_the_file(capsys, tmp_path, command):
    bad = write(tmp_path / "bad.csv", "station,elevation\n0,101\n2,abc\n4,101\n")
    extra = {"section": ["--stage", "100"], "table": ["--from", "99", "--to", "100", "--step",
             "0.5"], "flow": ["--stage", "100", "--n", "0.03", "--slope", "0.001"],
             "check": []}[command]  # fmt: skip
    code, _, err = run(capsys, command, bad, *extra)
    assert code == 2 and err.startswith(f"stakeline {command}: {bad}: row 3: elevation")


def test_a_visit_without_line_heights_says_what_to_type(tmp_path, capsys):
    path = tmp_path / "s.db"
    with Store.open(path) as store:
        site = store.create_site("Demo", "", "")
        section = store.create_section(site["uuid"], "XS", "L", "R")
        visit = store.start_visit(section["uuid"], "2026-04-14")
        for station, reading in [(0, 0.2), (2, 1.5), (4, 0.3)]:
            store.save_station(visit["uuid"], station, reading)
        store.finish_visit(visit["uuid"])
    for command in ("rating", "figures", "report", "export"):
        extra = {"report": ["--out", tmp_path / "r.pdf"], "export": ["--out", tmp_path / "x",
                 "--n", "0.03", "--slope", "0.001"], "rating": ["--n", "0.03", "--slope",
                 "0.001"], "figures": []}[command]  # fmt: skip
        code, _, err = run(capsys, command, "--store", path, "--visit", visit["uuid"], *extra)
        assert code == 2 and err.count("\n") == 1, (command, err)
        assert "no line heights" in err and "nan" not in err, (command, err)


# --- read-only file systems and damaged stores ------------------------------------------------
@pytest.fixture
def read_only_office(tmp_path, capsys):
    """A demo office store on a file system mounted read-only (root only)."""
    office = tmp_path / "office.db"
    assert run(capsys, "demo", "--store", office)[0] == 0
    mount = tmp_path / "ro"
    mount.mkdir()
    if not hasattr(os, "geteuid") or os.geteuid() != 0 or shutil.which("mount") is None:
        pytest.skip("needs root to mount a read-only tmpfs")
    done = subprocess.run(["mount", "-t", "tmpfs", "-o", "size=8m", "tmpfs", str(mount)],
                          capture_output=True)  # fmt: skip
    if done.returncode != 0:
        pytest.skip("cannot mount a tmpfs here")
    shutil.copy(office, mount / "office.db")
    subprocess.run(["mount", "-o", "remount,ro", str(mount)], check=True)
    yield mount / "office.db"
    subprocess.run(["umount", str(mount)], capture_output=True)


def test_read_only_commands_work_on_a_read_only_file_system(read_only_office, tmp_path, capsys):
    office = read_only_office
    code, out, err = run(capsys, "visits", "--store", office, "--json")
    assert code == 0, err
    visits = {(v["section"], v["date"]): v["uuid"] for v in json.loads(out)}
    visit, earlier = visits[("XS1 riffle", "2026-09-22")], visits[("XS1 riffle", "2026-04-14")]
    rough = ["--roughness", "mountain-gravel", "--slope", "0.004"]
    for argv in (
        ["conflicts", "--store", office],
        ["devices", "--store", office],
        ["rating", "--store", office, "--visit", visit, *rough],
        ["compare", "--store", office, "--visit", visit, "--visit", earlier, "--json"],
        ["figures", "--store", office, "--visit", visit, *rough, "--json"],
        ["report", "--store", office, "--visit", visit, "--out", tmp_path / "r.pdf", *rough],
        ["export", "--store", office, "--visit", visit, "--out", tmp_path / "x", *rough],
    ):
        code, out, err = run(capsys, *argv)
        assert code == 0 and "unable to open" not in err, (argv[0], err)
    for argv in (["import", tmp_path, "--into", office],
                 ["pack", "--store", office, "--outbox", tmp_path / "out"]):  # fmt: skip
        code, out, err = run(capsys, *argv)
        assert code == 2 and err.count("\n") == 1 and "read-only" in err, (argv[0], err)


def test_import_into_a_damaged_store_says_how_to_recover(tmp_path, capsys):
    field, office = tmp_path / "field.db", tmp_path / "office.db"
    run(capsys, "demo", "--store", field)
    run(capsys, "pack", "--store", field, "--outbox", tmp_path / "out")
    run(capsys, "demo", "--store", office)
    with Store.open(office) as store:
        store.checkpoint()
    data = bytearray(office.read_bytes())
    data[4096 * 3 : 4096 * 4] = bytes(4096)
    office.write_bytes(bytes(data))
    code, out, err = run(capsys, "import", tmp_path / "out", "--into", office)
    assert code == 2 and out == "" and err.count("\n") == 1
    assert "stakeline salvage --store" in err and "run the same import again" not in err


def test_an_unexpected_failure_is_one_line_asking_for_a_report(monkeypatch):
    # A defect inside a command (here: one raising KeyError) must not print a traceback: one
    # line that names the command and asks for a report, exit 3; STAKELINE_DEBUG shows it all.
    import click
    from stakeline.app.cli.base import EXIT_DEFECT, DefectError, run_one_line

    ctx = click.Context(click.Command("section"), info_name="stakeline section")

    def broken(_ctx):
        raise KeyError("elevation")

    monkeypatch.delenv("STAKELINE_DEBUG", raising=False)
    with pytest.raises(DefectError) as caught:
        run_one_line(ctx, broken)
    assert caught.value.exit_code == EXIT_DEFECT == 3
    message = caught.value.message
    assert message.startswith("stakeline section: ") and "\n" not in message
    assert "KeyError" in message and "report" in message
    monkeypatch.setenv("STAKELINE_DEBUG", "1")
    with pytest.raises(KeyError):
        run_one_line(ctx, broken)
