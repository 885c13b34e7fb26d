"""Hostile input to every command: never a traceback, never a warning, one line when refused.

Table-driven over every command of ``stakeline`` (subcommands included, and commands added
later, through a fallback built from their parameters): each command starts from a valid
invocation (:data:`BASES`), then every number option takes each value of :data:`VALUES` in turn
and every file or store parameter each kind of :data:`PATH_KINDS`.  Whatever the outcome, the
exit code is 0, 1 or 2, nothing escapes as an exception, numpy and Python warn of nothing,
stderr holds no "Traceback" and no "Warning", a refusal is at most one line, and a success
prints no NaN or infinity.  A few cases run as real ``python -m stakeline`` processes too, for
the stderr a person sees.
"""

from __future__ import annotations

import itertools
import os
import random
import re
import shutil
import signal
import subprocess
import sys
import warnings
from pathlib import Path

import click
import pytest
from stakeline.app.cli import cli, main
from stakeline.store import Store

VALUES = ("nan", "inf", "-inf", "1e308", "1e-300", "-1", "0")
"""Numbers a careless or hostile person types."""

INTEGERS = ("-1", "0", "1" + "0" * 30)
"""Whole numbers of the same kind, for integer options."""

PATH_KINDS = ("missing", "folder", "fifo", "empty", "binary", "text", "readonly")
"""Things given where a file or a store is expected."""

PATH_OPTIONS = ("--store", "--into", "--out", "--outbox", "--plot")
"""Options naming a file or folder."""

ROUGH = ["--roughness", "mountain-gravel"]
BASES: dict[str, list[list[str]]] = {
    "section": [["section", "{csv}", "--stage", "100"]],
    "table": [["table", "{csv}", "--from", "99", "--to", "100.5", "--step", "0.5"]],
    "check": [["check", "{csv}", "--stage", "100", "--min-stations", "5", "--line-left", "101.5",
               "--line-right", "101.5", "--line-check", "101.5", "--plumb-length", "5"]],
    "pack": [["pack", "--store", "{field_copy}", "--outbox", "{fresh}"]],
    "import": [["import", "{package}", "--into", "{office_copy}"]],
    "demo": [["demo", "--store", "{fresh}"]],
    "visits": [["visits", "--store", "{office}"]],
    "conflicts": [["conflicts", "--store", "{office}"]],
    "resolve": [["resolve", "{conflict}", "--store", "{office_copy}", "--keep", "office"]],
    "flow": [["flow", "{csv}", "--stage", "100", "--n", "0.035", "--n-overbank", "0.05",
              "--split", "2", "--slope", "0.002"],
             ["flow", "{csv}", "--stage", "100", *ROUGH, "--water-levels", "100.2", "100.1",
              "--reach", "50", "--bank-tops"]],
    "roughness": [["roughness"]],
    "rating": [["rating", "{csv}", "--from", "99", "--to", "100.5", "--step", "0.25",
                "--discharge", "1", "--n", "0.035", "--n-overbank", "0.05", "--split", "2",
                "--slope", "0.002"],
               ["rating", "--store", "{office}", "--visit", "{visit}", *ROUGH,
                "--water-levels", "100.2", "100.1", "--reach", "50", "--plot", "{fresh}.png"]],
    "compare": [["compare", "{csv}", "{csv2}", "--stage", "100"],
                ["compare", "--store", "{office}", "--visit", "{visit}", "--visit", "{earlier}",
                 "--stage", "100", "--plot", "{fresh}.png"]],
    "export": [["export", "--store", "{office}", "--visit", "{visit}", "--out", "{fresh}",
                "--step", "0.1", "--n", "0.04", "--n-overbank", "0.05", "--split", "3",
                "--slope", "0.004"],
               ["export", "--store", "{office}", "--visit", "{visit}", "--out", "{fresh}",
                *ROUGH, "--water-levels", "100.2", "100.1", "--reach", "50"]],
    "report": [["report", "--store", "{office}", "--visit", "{visit}", "--out", "{fresh}.pdf",
                *ROUGH, "--slope", "0.004", "--stage", "99.95", "--bankfull", "100.8",
                "--step", "0.1", "--reading-precision", "0.005", "--station-precision", "0.01",
                "--n-overbank", "0.05"],
               ["report", "--store", "{office}", "--visit", "{visit}", "--out", "{fresh}.pdf",
                "--n", "0.04", "--split", "3", "--water-levels", "100.2", "100.1",
                "--reach", "50", "--no-compare"]],
    "figures": [["figures", "--store", "{office}", "--visit", "{visit}", *ROUGH, "--slope",
                 "0.004", "--stage", "99.95", "--bankfull", "100.8", "--n-overbank", "0.05",
                 "--json"],
                ["figures", "--store", "{office}", "--visit", "{visit}", "--n", "0.04",
                 "--split", "3", "--water-levels", "100.2", "100.1", "--reach", "50"]],
    "discharge": [["discharge", "{gauging}"]],
    "calibrate": [["calibrate", "{csv}", "--stage", "100", "--discharge", "1", "--slope",
                   "0.002", "--discharge-uncertainty", "0.03", "--slope-error", "0.0002"]],
    "devices": [["devices", "--store", "{office}"]],
    "devices export": [["devices", "export", "--store", "{field_copy}", "--out", "{fresh}"]],
    "devices trust": [["devices", "trust", "{key}", "--into", "{office_copy}"]],
    "devices retire": [["devices", "retire", "{fingerprint}", "--store", "{office_copy}",
                        "--at", "2026-05-02T08:00"]],
    "salvage": [["salvage", "--store", "{office}", "--into", "{fresh}"]],
    "measured-rating": [["measured-rating", "--store", "{office}", "--section", "XS1 riffle",
                         "--offset", "99.3", "--plot", "{fresh}.png", "--json"]],
}  # fmt: skip
"""A valid invocation (or two, to reach every option) of each command."""

SECTION = ("station,elevation,code\n0,101.0,\n0.5,100.5,bank_top\n2,99.2,\n3,98.9,\n4,99.0,\n"
           "6,99.3,\n7.5,100.6,bank_top\n8,101.1,\n")  # fmt: skip
GAUGING = "station,depth,velocity\n0,0,\n1,0.4,0.3\n2,0.6,0.5\n3,0.5,0.4\n4,0,\n"
NOT_FINITE = re.compile(r"\b(nan|inf|infinity)\b", re.IGNORECASE)


def commands(group: click.Group = cli, prefix: tuple[str, ...] = ()):
    """Every command path of ``group``: ``"flow"``, ``"devices trust"``..."""
    for name, command in group.commands.items():
        yield " ".join((*prefix, name)), command
        if isinstance(command, click.Group):
            yield from commands(command, (*prefix, name))


COMMANDS = dict(commands())


def fallback(path: str, command: click.Command) -> list[list[str]]:
    """A plausible invocation of a command not in :data:`BASES` (added since)."""
    argv = path.split()
    for param in command.params:
        if isinstance(param, click.Argument) and param.required:
            argv.append("{csv}")
        elif isinstance(param, click.Option) and param.required:
            if param.name in ("store", "into"):
                value = "{office}"
            elif isinstance(param.type, click.Choice):
                value = str(param.type.choices[0])
            else:
                value = {"float": "1", "integer": "1"}.get(param.type.name, "{fresh}")
            argv += [param.opts[0], value] * (1 if param.nargs == 1 else 1)
    return [argv]


def number_options(command: click.Command) -> dict[str, tuple[str, int]]:
    """The float and integer options of ``command``: name -> (type name, nargs)."""
    return {p.opts[0]: (p.type.name, p.nargs) for p in command.params
            if isinstance(p, click.Option) and p.type.name in ("float", "integer")}  # fmt: skip


def with_value(argv: list[str], option: str, words: list[str]) -> list[str]:
    """``argv`` with ``option``'s value(s) replaced by ``words`` (appended when absent)."""
    if option not in argv:
        return [*argv, option, *words]
    at = argv.index(option)
    return [*argv[: at + 1], *words, *argv[at + 1 + len(words) :]]


def mutations(path: str):
    """(label, argv) of every hostile invocation of the command ``path``."""
    command = COMMANDS[path]
    bases = BASES.get(path) or fallback(path, command)
    numbers = number_options(command)
    for index, base in enumerate(bases):
        for option, (kind, nargs) in numbers.items():
            if option not in base and (index or path in BASES):
                continue  # reached by another base
            for value in INTEGERS if kind == "integer" else VALUES:
                for spot in range(nargs):
                    words = ["100.2", "100.1"][:nargs] if nargs > 1 else [value]
                    words[spot] = value
                    yield f"{option}={' '.join(words)}", with_value(base, option, words)
        for at, word in enumerate(base):
            is_file = word.startswith("{") and word.strip("{}").split("_")[0] in (
                "csv", "csv2", "gauging", "package", "key")  # fmt: skip
            if is_file or (at and base[at - 1] in PATH_OPTIONS):
                for kind in PATH_KINDS:
                    yield (
                        f"{base[at - 1] if not is_file else word}={kind}",
                        [*base[:at], f"<{kind}>", *base[at + 1 :]],
                    )


def test_every_number_option_is_reached():
    for path, command in COMMANDS.items():
        reached = {label.split("=")[0] for label, _ in mutations(path)}
        assert set(number_options(command)) <= reached, path


# --- the world the commands run in -----------------------------------------------------------
def _mount_read_only(folder: Path, files: list[Path]) -> bool:
    """Copy ``files`` into a tmpfs at ``folder`` remounted read-only (root only)."""
    folder.mkdir()
    if not hasattr(os, "geteuid") or os.geteuid() != 0 or shutil.which("mount") is None:
        return False
    done = subprocess.run(["mount", "-t", "tmpfs", "-o", "size=8m", "tmpfs", str(folder)],
                          capture_output=True)  # fmt: skip
    if done.returncode != 0:
        return False
    for file in files:
        shutil.copy(file, folder / file.name)
    return subprocess.run(["mount", "-o", "remount,ro", str(folder)]).returncode == 0


@pytest.fixture(scope="module")
def world(tmp_path_factory):
    """Section and gauging files, a field store, a trusting office store with the demo
    visits, a package and a device key file; a read-only file system holding copies."""
    root = tmp_path_factory.mktemp("hostile")
    (root / "xs.csv").write_text(SECTION)
    (root / "xs2.csv").write_text(SECTION.replace("3,98.9", "3,98.6"))
    (root / "gauging.csv").write_text(GAUGING)
    field, office = root / "field.db", root / "office.db"
    with Store.open(field) as store:
        store.load_demo()
        store.export_device_key(root / "field-key.json")
        from stakeline.store.package import import_files, pack_visits

        packed = pack_visits(store, root / "outbox")
    shutil.copy(field, root / "other.db")  # another device holding a copy, changed there
    with Store.open(root / "other.db", device_id="tablet-B") as store:
        visit = store.visits()[0]["uuid"]
        store.correct_station(store.stations(visit)[0]["uuid"], reading=0.4)
        store.export_device_key(root / "other-key.json")
        pack_visits(store, root / "other-outbox")
    with Store.open(office) as store:
        device = store.trust_device(root / "field-key.json", by="test office")
        store.trust_device(root / "other-key.json", by="test office")
        import_files(store, [root / "outbox"])
        store.correct_station(store.stations(visit)[0]["uuid"], reading=0.3)  # and here
        import_files(store, [root / "other-outbox"])
        (conflict,) = store.conflicts()
        visits = {(v["section"], v["date"]): v["uuid"] for v in store.visits()}
    places = {
        "csv": root / "xs.csv", "csv2": root / "xs2.csv", "gauging": root / "gauging.csv",
        "field": field, "office": office, "package": Path(packed[0]["path"]),
        "key": root / "field-key.json", "fingerprint": device["fingerprint"],
        "visit": visits[("XS1 riffle", "2026-09-22")],
        "earlier": visits[("XS1 riffle", "2026-04-14")], "conflict": conflict["file_sha"][:10],
    }  # fmt: skip
    mount = root / "ro"
    read_only = _mount_read_only(mount, [office])
    places["readonly"] = mount / "office.db" if read_only else None
    yield {"root": root, "places": places, "counter": itertools.count()}
    if read_only:
        subprocess.run(["umount", str(mount)], capture_output=True)


def materialise(argv: list[str], world) -> list[str]:
    """``argv`` with its placeholders made real: fresh copies of stores that get written, a
    fresh path for outputs, and the hostile thing for ``<kind>``."""
    places, root = world["places"], world["root"]
    run = root / f"run{next(world['counter'])}"
    run.mkdir()
    out = []
    for word in argv:
        if word.startswith("<"):
            word = str(hostile(word.strip("<>"), run, places))
        elif "{" in word:
            name = word[word.index("{") + 1 : word.index("}")]
            if name == "fresh":
                value = run / "fresh"
            elif name.endswith("_copy"):
                value = run / f"{name}.db"
                shutil.copy(places[name[: -len("_copy")]], value)
            else:
                value = places[name]
            word = word.replace("{" + name + "}", str(value))
        out.append(word)
    return out


def hostile(kind: str, run: Path, places: dict) -> Path:
    """A fresh thing of ``kind`` in ``run``."""
    path = run / f"hostile-{kind}"
    if kind == "folder":
        path.mkdir()
    elif kind == "fifo":
        os.mkfifo(path)
    elif kind == "empty":
        path.write_bytes(b"")
    elif kind == "binary":
        path.write_bytes(random.Random(kind).randbytes(4096) + b"\x00" * 16)
    elif kind == "text":
        path.write_text("not a store and not a section, just words\n" * 40)
    elif kind == "readonly":
        return places["readonly"] or places["office"]
    return path


class Hung(Exception):
    """A command ran far longer than any of these should."""


def _alarm(signum, frame):
    raise Hung("the command hung (waited 60 s)")


def run_in_process(argv: list[str], capsys) -> tuple[int, str, str, list]:
    """Run ``stakeline ARGV`` in this process: exit code, stdout, stderr and the warnings."""
    previous = signal.signal(signal.SIGALRM, _alarm)
    signal.alarm(60)
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            code = main(argv)
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, previous)
    out, err = capsys.readouterr()
    shown = [w for w in caught if not issubclass(w.category, (DeprecationWarning,
                                                                PendingDeprecationWarning))]  # fmt: skip
    return code, out, err, shown


def check_outcome(label: str, argv: list[str], code: int, out: str, err: str, caught) -> None:
    where = f"{label}: stakeline {' '.join(argv)}"
    assert code in (0, 1, 2), where
    assert "Traceback" not in err and "Warning" not in err, (where, err)
    assert not caught, (where, [str(w.message) for w in caught])
    lines = [line for line in err.splitlines() if line.strip()]
    if code == 2:
        assert len(lines) == 1 and lines[0].startswith("stakeline "), (where, err)
    if code == 0:
        assert not NOT_FINITE.search(out), (where, out[:2000])


@pytest.mark.parametrize("path", sorted(COMMANDS))
def test_hostile_input_never_crashes(path, world, capsys):
    failures = []
    for base in BASES.get(path, []):  # each starting point is valid as it stands
        real = materialise(base, world)
        code, out, err, caught = run_in_process(real, capsys)
        if code != 0 or caught:
            failures.append(f"base: exit {code}: {err.strip()[:300]}")
    for label, argv in mutations(path):
        real = materialise(argv, world)
        try:
            code, out, err, caught = run_in_process(real, capsys)
            check_outcome(label, real, code, out, err, caught)
        except Exception as exc:  # collected, so one run shows every defect of the command
            failures.append(f"{label}: {type(exc).__name__}: {str(exc)[:300]}")
    assert not failures, "\n".join(failures)


@pytest.mark.parametrize(
    "argv",
    [
        ["table", "{csv}", "--from", "nan", "--to", "100", "--step", "0.5"],
        ["table", "{csv}", "--from", "99", "--to", "inf", "--step", "0.5"],
        ["section", "{csv}", "--stage", "1e308"],
        ["flow", "{csv}", "--stage", "100", "--n", "1e-300", "--slope", "1e308"],
        ["rating", "{csv}", "--n", "0.03", "--slope", "0.001", "--step", "1e-300"],
        ["import", "<fifo>", "--into", "{office_copy}"],
        ["visits", "--store", "<binary>"],
        ["section", "<fifo>", "--stage", "100"],
    ],
)
def test_hostile_input_in_a_real_process(argv, world):
    real = materialise(argv, world)
    done = subprocess.run([sys.executable, "-m", "stakeline", *real], capture_output=True,
                          text=True, timeout=120)  # fmt: skip
    check_outcome("process", real, done.returncode, done.stdout, done.stderr, [])
    assert done.returncode in (1, 2)
