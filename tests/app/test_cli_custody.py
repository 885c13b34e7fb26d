"""Chain of custody at the command line: device keys, held packages, the signer named in the
report and the exports, and salvage of a damaged store.

Real keys (PyNaCl, made by the stores themselves), real files and, for the field-to-office
chain, real ``python -m stakeline`` processes.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import subprocess
import sys
import zlib
from pathlib import Path

import pytest
from stakeline.app.cli import main
from stakeline.store import Store

ROOT = Path(__file__).resolve().parents[2]


def stakeline(*argv, cwd: Path) -> subprocess.CompletedProcess:
    """``python -m stakeline ARGV`` as a person runs it."""
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    return subprocess.run([sys.executable, "-m", "stakeline", *map(str, argv)], cwd=cwd,
                          env=env, capture_output=True, text=True, timeout=180)  # fmt: skip


def run(capsys, *argv) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def pdf_text(path: Path) -> str:
    """The text drawn in a PDF written by matplotlib: the strings of its text operators, each
    text object on a line (enough to find a sentence; matplotlib kerns letter by letter)."""
    data = path.read_bytes()
    lines = []
    for match in re.finditer(rb"stream\r?\n(.*?)\r?\nendstream", data, re.S):
        try:
            content = zlib.decompress(match.group(1))
        except zlib.error:
            continue
        for block in re.findall(rb"BT(.*?)ET", content, re.S):
            pieces = re.findall(rb"\(((?:\\.|[^\\)])*)\)", block)
            text = b"".join(re.sub(rb"\\(.)", rb"\1", p) for p in pieces)
            lines.append(text.decode("latin-1"))
    return "\n".join(lines)


def squash(text: str) -> str:
    """``text`` without the letter pairs a PDF font may draw as one ligature glyph (ff, fi...)
    and without control codes, so a sentence found by :func:`pdf_text` compares whatever
    ligatures the layout used."""
    return re.sub("ffi|ffl|ff|fi|fl|[\x00-\x09\x0b-\x1f]", "", text)


def forge(package: Path, out: Path) -> None:
    """A copy of ``package`` with one reading changed and its SHA-256 made right again, as
    someone with the file but not the key would do (the documented package format)."""
    document = json.loads(package.read_text())
    document["records"]["station_versions"][0]["reading"] += 0.05
    document["manifest"]["sha256"] = "0" * 64

    def text() -> bytes:
        return (json.dumps(document, sort_keys=True, separators=(",", ":"), ensure_ascii=True)
                + "\n").encode("ascii")  # fmt: skip

    document["manifest"]["sha256"] = hashlib.sha256(text()).hexdigest()
    out.write_bytes(text())


# --- the field-to-office chain, as separate processes -----------------------------------------
def test_field_to_office_chain_in_real_processes(tmp_path):
    done = stakeline("demo", "--store", "field.db", cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    done = stakeline("devices", "export", "--store", "field.db", "--out", "field-key.json",
                     cwd=tmp_path)  # fmt: skip
    assert done.returncode == 0 and "wrote field-key.json" in done.stdout, done.stderr
    device = json.loads((tmp_path / "field-key.json").read_text())["device"]
    assert stakeline("pack", "--store", "field.db", "--outbox", "out", cwd=tmp_path).returncode == 0

    # An office that has not trusted the device holds its packages: not merged, exit 1.
    done = stakeline("import", "out", "--into", "office.db", cwd=tmp_path)
    assert done.returncode == 1 and done.stderr == ""
    lines = done.stdout.splitlines()
    assert len(lines) == 6 and all("held: signed by device" in line for line in lines)
    assert all("does not trust" in line for line in lines)
    listed = stakeline("visits", "--store", "office.db", "--json", cwd=tmp_path)
    assert json.loads(listed.stdout) == []
    held = stakeline("conflicts", "--store", "office.db", cwd=tmp_path)
    assert held.stdout.count(" held ") == 6 and device in held.stdout

    # The office trusts the device once: its held packages merge.
    done = stakeline("devices", "trust", "field-key.json", "--into", "office.db",
                     "--by", "Ana Office", cwd=tmp_path)  # fmt: skip
    assert done.returncode == 0, done.stdout + done.stderr
    assert "6 of 6 held packages of this device merged" in done.stdout
    assert done.stdout.count("imported visit") == 6
    visits = json.loads(stakeline("visits", "--store", "office.db", "--json", cwd=tmp_path).stdout)
    assert len(visits) == 6
    keys = json.loads(stakeline("devices", "--store", "office.db", "--json", cwd=tmp_path).stdout)
    (trusted,) = [k for k in keys if not k["own"]]
    assert trusted["device"] == device and trusted["trusted_by"] == "Ana Office"
    assert stakeline("conflicts", "--store", "office.db", cwd=tmp_path).stdout.startswith("no ")

    # The report and the exports name the device that signed the visit.
    visit = next(v["uuid"] for v in visits if v["date"] == "2026-09-22")
    done = stakeline("report", "--store", "office.db", "--visit", visit, "--out", "r.pdf",
                     "--roughness", "mountain-gravel", "--slope", "0.004", cwd=tmp_path)  # fmt: skip
    assert done.returncode == 0 and done.stderr == "", done.stderr
    text = squash(pdf_text(tmp_path / "r.pdf"))
    assert squash(f"signed by device '{device}' (key {trusted['fingerprint']})") in text
    assert squash("trusted by 'Ana Office'") in text
    done = stakeline("export", "--store", "office.db", "--visit", visit, "--out", "x",
                     cwd=tmp_path)  # fmt: skip
    assert done.returncode == 0
    (csv_file,) = (tmp_path / "x").glob("*_stations.csv")
    first, header = csv_file.read_text().splitlines()[:2]
    assert first.startswith(f"# signed by device '{device}'") and header.startswith("station,")
    (geojson,) = (tmp_path / "x").glob("*.geojson")
    line = json.loads(geojson.read_text())["features"][0]["properties"]
    assert line["kind"] == "section line" and f"'{device}'" in line["signed_by"]
    # The stations CSV still reads back as a section file, comment and all.
    done = stakeline("section", csv_file, "--stage", "99.9", "--json", cwd=tmp_path)
    assert done.returncode == 0 and json.loads(done.stdout)["area"] > 0


# --- the same, in process, for the details ----------------------------------------------------
@pytest.fixture
def field_and_office(tmp_path, capsys):
    field, office = tmp_path / "field.db", tmp_path / "office.db"
    assert run(capsys, "demo", "--store", field)[0] == 0
    assert run(capsys, "devices", "export", "--store", field, "--out", tmp_path / "k.json")[0] == 0
    assert run(capsys, "pack", "--store", field, "--outbox", tmp_path / "out")[0] == 0
    return field, office, tmp_path / "k.json", sorted((tmp_path / "out").iterdir())


def test_a_package_changed_after_signing_is_held_with_why(field_and_office, tmp_path, capsys):
    _, office, key, packages = field_and_office
    assert run(capsys, "devices", "trust", key, "--into", office)[0] == 0
    forged = tmp_path / "forged.stakeline-visit.json"
    forge(packages[0], forged)
    code, out, err = run(capsys, "import", forged, "--into", office)
    assert code == 1 and err == ""
    assert "held: its signature does not match its content" in out
    with Store.open(office) as store:
        assert store.visits() == []  # nothing of it merged
    code, out, _ = run(capsys, "conflicts", "--store", office, "--json")
    (entry,) = json.loads(out)
    assert entry["status"] == "held" and "signature does not match" in entry["reason"]
    assert {"file_sha", "device", "reason", "fingerprint", "signer_key"} <= set(entry)
    # The genuine package still merges.
    assert run(capsys, "import", packages[0], "--into", office)[0] == 0


def test_trust_json_and_a_device_trusted_twice(field_and_office, capsys):
    _, office, key, packages = field_and_office
    assert run(capsys, "import", *packages, "--into", office)[0] == 1
    code, out, _ = run(capsys, "devices", "trust", key, "--into", office, "--by", "B", "--json")
    got = json.loads(out)
    assert code == 0 and set(got) == {"device", "retried"}
    assert [r["status"] for r in got["retried"]] == ["imported"] * 6
    assert got["device"]["trusted_by"] == "B"
    code, out, _ = run(capsys, "devices", "trust", key, "--into", office)
    assert code == 0 and "no held packages of this device" in out


def test_retired_and_lost_keys_hold_what_they_sign(field_and_office, tmp_path, capsys):
    field, office, key, packages = field_and_office
    run(capsys, "devices", "trust", key, "--into", office)
    assert run(capsys, "import", packages[0], "--into", office)[0] == 0
    fingerprint = next(d["fingerprint"] for d in json.loads(
        run(capsys, "devices", "--store", office, "--json")[1]) if not d["own"])  # fmt: skip
    code, out, _ = run(capsys, "devices", "retire", fingerprint, "--store", office, "--lost",
                       "--by", "Ana")  # fmt: skip
    assert code == 0 and "retired" in out and "lost" in out and "Ana" in out
    code, out, _ = run(capsys, "import", packages[1], "--into", office)
    assert code == 1 and "reported lost" in out
    code, out, _ = run(capsys, "devices", "--store", office)
    assert f"{fingerprint}" in out and "lost" in out
    code, _, err = run(capsys, "devices", "trust", key, "--into", office)
    assert code == 2 and "never trusted again" in err and err.count("\n") == 1


def test_retire_from_a_time(field_and_office, capsys):
    _, office, key, packages = field_and_office
    run(capsys, "devices", "trust", key, "--into", office)
    code, out, _ = run(capsys, "devices", "retire", json.loads(key.read_text())["device"],
                       "--store", office, "--at", "2000-01-01T00:00")  # fmt: skip
    assert code == 0 and "retired 2000-01-01" in out
    code, out, _ = run(capsys, "import", packages[0], "--into", office)
    assert code == 1 and "after its key was retired" in out
    code, _, err = run(capsys, "devices", "retire", "abc", "--store", office, "--at", "soon")
    assert code == 2 and err.count("\n") == 1


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (["devices"], "give --store STORE"),
        (["devices", "--store", "{office}", "export", "--store", "{field}", "--out", "{tmp}/k"],
         "give --store after the subcommand"),
        (["devices", "trust", "{tmp}/none.json", "--into", "{office}"], "no such device key"),
        (["devices", "trust", "{tmp}/out", "--into", "{office}"], "is a folder"),
        (["devices", "trust", "{key}.txt", "--into", "{office}"], "not a Stakeline device key"),
        (["devices", "trust", "{tmp}", "--into", "{office}"], "is a folder"),
        (["devices", "export", "--store", "{field}", "--out", "{tmp}"], "is a folder"),
        (["devices", "--store", "{tmp}/none.db"], "no store file"),
        (["salvage", "--store", "{office}", "--into", "{field}"], "already exists"),
    ],
)  # fmt: skip
def test_custody_commands_refuse_in_one_line(field_and_office, tmp_path, capsys, argv, message):
    field, office, _, packages = field_and_office
    run(capsys, "import", *packages, "--into", office)
    (tmp_path / "k.json.txt").write_text('{"format": "something else"}')
    fill = {"tmp": tmp_path, "field": field, "office": office, "key": tmp_path / "k.json"}
    code, out, err = run(capsys, *(a.format(**fill) for a in argv))
    assert code == 2 and message in err and err.count("\n") == 1, err
    assert err.startswith("stakeline devices" if argv[0] == "devices" else "stakeline salvage")


# --- salvage ---------------------------------------------------------------------------------
def test_salvage_copies_what_it_can_and_leaves_the_old_file(field_and_office, tmp_path, capsys):
    field, _, _, _ = field_and_office
    with Store.open(field) as store:
        store.checkpoint()
    damaged = tmp_path / "damaged.db"
    data = bytearray(field.read_bytes())
    page = 4096
    pages = len(data) // page
    data[(pages // 2) * page : (pages // 2 + 1) * page] = bytes(page)  # one page zeroed
    damaged.write_bytes(bytes(data))
    before = hashlib.sha256(damaged.read_bytes()).hexdigest()
    code, out, err = run(capsys, "salvage", "--store", damaged, "--into", tmp_path / "new.db")
    assert code in (0, 1) and err == ""
    assert "station_versions" in out and "copied" in out and "new store check: ok" in out
    assert hashlib.sha256(damaged.read_bytes()).hexdigest() == before  # untouched
    code, out, _ = run(capsys, "salvage", "--store", field, "--into", tmp_path / "whole.db",
                       "--json")  # fmt: skip
    got = json.loads(out)
    assert code == 0 and got["check"] == "ok"
    assert all(t["unreadable"] == 0 for t in got["tables"].values())
    assert got["tables"]["visits"]["copied"] == 6
    code, out, _ = run(capsys, "visits", "--store", tmp_path / "whole.db", "--json")
    assert len(json.loads(out)) == 6


def test_salvage_of_an_empty_file_says_so_at_once(tmp_path, capsys):
    (tmp_path / "empty.db").write_bytes(b"")
    code, _, err = run(capsys, "salvage", "--store", tmp_path / "empty.db", "--into",
                       tmp_path / "new.db")  # fmt: skip
    assert code == 2 and "nothing to salvage" in err and not (tmp_path / "new.db").exists()
