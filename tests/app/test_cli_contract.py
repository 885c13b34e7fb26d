"""The command line's contract: every command, argument and option of the argparse version parses
the same way under click, usage errors exit 2 in a few lines, and the CLI never imports Kivy."""

from __future__ import annotations

import os
import subprocess
import sys

import click
import pytest
from stakeline.app.cli import cli, main
from stakeline.app.cli.base import expand_abbreviations

ROUGHNESS = {"--n": "float", "--roughness": "text", "--n-overbank": "float",
             "--split": "float+", "--bank-tops": "flag"}  # fmt: skip
SLOPE = {"--slope": "float", "--water-levels": "float2", "--reach": "float"}
VISIT = {"--store": "text", "--visit": "text"}

# Written down from the argparse parser before the move to click: command -> positional
# arguments (name, nargs: 1, "?", "*" or "+") and options (kind; "!" = required).
TODAY = {
    "section": ([("FILE.csv", 1)],
                {"--stage": "float!", "--unit": "text", "--json": "flag"}),
    "table": ([("FILE.csv", 1)],
              {"--from": "float!", "--to": "float!", "--step": "float!", "--csv": "flag"}),
    "check": ([("FILE.csv", 1)],
              {"--stage": "float", "--unit": "choice:m|ft", "--json": "flag",
               "--min-stations": "int", "--line-left": "float", "--line-right": "float",
               "--line-check": "float", "--plumb-length": "float"}),
    "pack": ([], {"--store": "text!", "--outbox": "text!"}),
    "import": ([("FILE", "+")], {"--into": "text!", "--json": "flag"}),
    "demo": ([], {"--store": "text!"}),
    "visits": ([], {"--store": "text!", "--json": "flag"}),
    "conflicts": ([], {"--store": "text!", "--json": "flag"}),
    "resolve": ([("CHECKSUM", 1)], {"--store": "text!", "--keep": "choice:office|merge!"}),
    "flow": ([("FILE.csv", 1)],
             {"--stage": "float!", "--units": "choice:si|us", "--json": "flag",
              **ROUGHNESS, **SLOPE}),
    "roughness": ([], {"--json": "flag"}),
    "rating": ([("FILE.csv", "?")],
               {**VISIT, "--units": "choice:si|us", "--from": "float", "--to": "float",
                "--step": "float", "--csv": "flag", "--out": "text", "--plot": "text",
                "--discharge": "float", **ROUGHNESS, **SLOPE}),
    "compare": ([("FILE.csv", "*")],
                {"--store": "text", "--visit": "text+", "--units": "choice:si|us",
                 "--stage": "float", "--json": "flag", "--plot": "text"}),
    "export": ([], {**VISIT, "--out": "text!", "--step": "float", **ROUGHNESS, **SLOPE}),
    "report": ([], {**VISIT, "--out": "text!", "--stage": "float", "--bankfull": "float",
                    "--step": "float", "--reading-precision": "float",
                    "--station-precision": "float", "--compare-with": "text",
                    "--no-compare": "flag", **ROUGHNESS, **SLOPE}),
}  # fmt: skip
DEFAULTS = {("section", "--unit"): "", ("check", "--unit"): "m", ("flow", "--units"): "si",
            ("rating", "--units"): "si", ("compare", "--units"): "si"}  # fmt: skip


def sample(kind: str, index: int) -> tuple[list[str], object]:
    """Command-line words for an option of ``kind`` and the value they must parse to."""
    kind = kind.rstrip("!")
    if kind == "flag":
        return [], True
    if kind.startswith("choice:"):
        word = kind.split(":")[1].split("|")[-1]
        return [word], word
    value = {"float": f"{index + 0.5}", "float+": f"{index + 0.5}", "int": f"{index + 3}",
             "text": f"t{index}", "text+": f"t{index}", "float2": f"{index + 0.5}"}[kind]  # fmt: skip
    typed = float(value) if kind.startswith("float") else int(value) if kind == "int" else value
    if kind == "float2":
        return [value, "-1e-3"], (typed, -0.001)
    return [value], typed


def by_option(command: click.Command) -> dict[str, click.Parameter]:
    return {o: p for p in command.params for o in p.opts if o.startswith("--")}


def test_the_commands_are_those_of_today_in_that_order():
    # Today's commands come first, in their order; commands added since follow them.
    assert list(cli.commands)[: len(TODAY)] == list(TODAY)


@pytest.mark.parametrize("name", list(TODAY))
def test_every_option_of_today_exists_with_its_kind(name):
    positionals, options = TODAY[name]
    command = cli.commands[name]
    assert set(by_option(command)) - {"--help"} == set(options)
    arguments = [p for p in command.params if isinstance(p, click.Argument)]
    assert [(p.nargs, p.required) for p in arguments] == [
        ({1: 1, "?": 1, "*": -1, "+": -1}[n], n in (1, "+")) for _, n in positionals
    ]
    for option, kind in options.items():
        param = by_option(command)[option]
        assert param.required == kind.endswith("!"), option
        if kind.startswith("choice:"):
            assert list(param.type.choices) == kind.rstrip("!").split(":")[1].split("|")


@pytest.mark.parametrize("name", list(TODAY))
def test_every_option_of_today_parses(name):
    positionals, options = TODAY[name]
    command = cli.commands[name]
    argv, expected = [], {}
    for index, (option, kind) in enumerate(options.items()):
        words, value = sample(kind, index)
        argv += [option, *words]
        if kind.endswith("+"):  # repeatable: given twice, both kept in order
            argv += [option, *words]
            value = (value, value)
        expected[by_option(command)[option].name] = value
    for position, (_, nargs) in enumerate(positionals):
        argv += [f"p{position}.csv"] * (2 if nargs in ("*", "+") else 1)
    params = command.make_context(name, argv).params
    for key, value in expected.items():
        assert params[key] == value, (name, key)
    # Defaults when nothing optional is given: as argparse had them.
    required = []
    for option, kind in options.items():
        if kind.endswith("!"):
            required += [option, *sample(kind, 0)[0]]
    required += ["x.csv" for _, nargs in positionals if nargs in (1, "+")]
    params = command.make_context(name, required).params
    for option, kind in options.items():
        if kind.endswith("!"):
            continue
        got = params[by_option(command)[option].name]
        want = DEFAULTS.get((name, option), False if kind == "flag" else None)
        assert got == want or (got == () and want is None and kind.endswith("+")), (name, option)


def test_options_may_be_abbreviated_as_before():
    params = cli.commands["table"].make_context("table", ["f.csv", "--fr", "1", "--to", "2",
                                                          "--ste=0.5", "--cs"]).params  # fmt: skip
    assert (params["start"], params["stop"], params["step"], params["as_csv"]) == (1, 2, 0.5, True)
    assert expand_abbreviations(["--s", "1"], ["--stage", "--step"]) == ["--s", "1"]  # ambiguous


@pytest.mark.parametrize("flag", ["-h", "--help"])
def test_help_for_the_group_and_each_command(flag, capsys):
    assert main([flag]) == 0
    listing = capsys.readouterr().out
    assert all(name in listing for name in TODAY)
    for name in TODAY:
        assert main([name, flag]) == 0
        assert capsys.readouterr().out.startswith(f"Usage: stakeline {name} ")


def test_every_command_and_option_has_help_text():
    # As sqlite-utils does: no command or option without a line of help.
    for name, command in cli.commands.items():
        assert command.short_help and command.help, name
        for param in command.params:
            text = param.help if isinstance(param, click.Option) else param.description
            assert text, (name, param.name)


@pytest.mark.parametrize(
    "argv",
    [
        ["section", "f.csv"],  # missing --stage
        ["section", "f.csv", "--stage", "high"],
        ["check", "f.csv", "--unit", "yd"],
        ["resolve", "abc", "--store", "o.db", "--keep", "both"],
        ["import", "--into", "o.db"],  # no files
        ["flow", "f.csv", "--stage", "1", "--water-levels", "1"],
        ["table", "f.csv", "--from", "1", "--to", "2", "--step", "1", "--nonsense"],
        ["nonsense"],
    ],
)
def test_usage_errors_exit_2_with_a_short_usage_and_one_error_line(argv, capsys):
    assert main(argv) == 2
    out, err = capsys.readouterr()
    lines = [line for line in err.splitlines() if line]
    assert out == "" and len(lines) <= 3 and "Traceback" not in err
    assert lines[-1].startswith("Error: ") and sum(line.startswith("Error") for line in lines) == 1
    assert len(lines) == 1 or lines[0].startswith("Usage: stakeline")


def test_input_errors_are_one_line_naming_the_command(capsys, tmp_path):
    assert main(["visits", "--store", tmp_path / "none.db"]) == 2
    out, err = capsys.readouterr()
    assert out == "" and err == f"stakeline visits: no store file at {tmp_path / 'none.db'}; " \
        "create one with 'stakeline demo' or the app\n"  # fmt: skip


def test_the_command_line_does_not_import_kivy(tmp_path):
    code = (
        "import sys; from stakeline.app.cli import main; "
        f"assert main(['demo', '--store', {str(tmp_path / 'd.db')!r}]) == 0; "
        "assert main(['roughness', '--json']) == 0; "
        "print(sorted(m for m in sys.modules if m.split('.')[0] == 'kivy'))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip().splitlines()[-1] == "[]"


@pytest.mark.parametrize("module", ["stakeline", "stakeline.app"])
def test_python_dash_m_runs_the_command(module, tmp_path):
    env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
    out = subprocess.run(
        [sys.executable, "-m", module, "roughness", "--json"],
        capture_output=True, text=True, timeout=120, cwd=tmp_path, env=env,
    )  # fmt: skip
    assert out.returncode == 0 and out.stdout.startswith('[{"key": ')
