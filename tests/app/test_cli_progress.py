"""Progress bars of long commands: on stderr when it is a terminal (a real pseudo-terminal here),
and nothing extra at all when it is not."""

from __future__ import annotations

import os
import pty
import subprocess
import sys

import pytest


def stakeline(argv, cwd, terminal: bool) -> tuple[int, str, str]:
    """Run ``python -m stakeline`` with stderr on a pseudo-terminal (``terminal``) or a pipe."""
    command = [sys.executable, "-m", "stakeline", *map(str, argv)]
    if not terminal:
        done = subprocess.run(command, capture_output=True, text=True, cwd=cwd, timeout=300)
        return done.returncode, done.stdout, done.stderr
    main, side = pty.openpty()
    proc = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=side, cwd=cwd)
    os.close(side)
    seen = b""
    while True:
        try:
            chunk = os.read(main, 4096)
        except OSError:  # EIO: the command closed its end
            break
        if not chunk:
            break
        seen += chunk
    os.close(main)
    out = proc.stdout.read().decode()
    proc.stdout.close()
    return proc.wait(timeout=300), out, seen.decode(errors="replace")


@pytest.fixture(scope="module")
def field(tmp_path_factory):
    folder = tmp_path_factory.mktemp("progress")
    code, _, err = stakeline(["demo", "--store", "field.db"], folder, terminal=False)
    assert code == 0, err
    from stakeline.store import Store

    with Store.open(folder / "field.db") as store:  # the offices trust the field device
        store.export_device_key(folder / "field.stakeline-device-key.json")
    for tag in ("tty", "pipe"):
        with Store.open(folder / f"office-{tag}.db") as office:
            office.trust_device(folder / "field.stakeline-device-key.json", by="test office")
    return folder


def run_long_commands(folder, terminal: bool) -> dict[str, tuple[int, str, str]]:
    """pack, import and report, each once, with stdout made independent of ``terminal``."""
    tag = "tty" if terminal else "pipe"
    code, out, _ = stakeline(["visits", "--store", "field.db", "--json"], folder, terminal=False)
    visit = out.split('"uuid": "')[1][:36]
    runs = {
        "pack": ["pack", "--store", "field.db", "--outbox", f"out-{tag}"],
        "import": ["import", f"out-{tag}", "--into", f"office-{tag}.db"],
        "report": ["report", "--store", "field.db", "--visit", visit, "--out", f"r-{tag}.png",
                   "--roughness", "mountain-gravel", "--slope", "0.004"],
    }  # fmt: skip
    results = {}
    for name, argv in runs.items():
        code, out, err = stakeline(argv, folder, terminal)
        results[name] = (code, out.replace(tag, "TAG"), err)
    return results


def test_pack_import_and_report_show_a_bar_only_on_a_terminal(field):
    piped = run_long_commands(field, terminal=False)
    shown = run_long_commands(field, terminal=True)
    for name in ("pack", "import", "report"):
        code, out, err = piped[name]
        assert code == 0 and err == "", err  # nothing extra for scripts: stderr stays empty
        assert out.strip()
        code, out, err = shown[name]
        assert code == 0 and "Traceback" not in err
        assert out == piped[name][1]  # stdout unchanged by the bar
        label = {"pack": "packing", "import": "importing", "report": "report"}[name]
        steps = {"pack": "6/6", "import": "6/6", "report": "3/3"}[name]  # visits; report steps
        assert label in err and "[" in err and "#" in err and steps in err, err
    assert [line.split()[0] for line in piped["pack"][1].splitlines()] == ["written"] * 6
    assert all("imported visit" in line for line in piped["import"][1].splitlines())
    assert piped["report"][1] == "wrote r-TAG.png\n"
