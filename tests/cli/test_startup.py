"""Start-up: ``volbench --help`` lists the commands without importing the heavy libraries.

Not a timed test (the machine is shared): the import check fails as soon as the help path pulls
in pandas, scipy, arch or statsmodels again; tests/benchmarks/bench_startup.py measures the time.
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from volbench.cli import COMMAND_HELP, build_parser, main

HEAVY = ("pandas", "scipy", "arch", "statsmodels", "numpy", "PySide6", "pyqtgraph")

_PROBE = """
import contextlib, io, json, sys
from volbench.cli import main
out = io.StringIO()
with contextlib.redirect_stdout(out), contextlib.redirect_stderr(io.StringIO()):
    code = main(sys.argv[1:])
roots = sorted({m.split('.')[0] for m in sys.modules})
print(json.dumps({"code": code, "roots": roots, "out": out.getvalue()}))
"""


def _probe(*argv: str) -> dict:
    done = subprocess.run([sys.executable, "-c", _PROBE, *argv], check=False, capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout)


@pytest.mark.parametrize("argv", [("--help",), ("--version",), ()])
def test_help_and_version_import_no_heavy_library(argv):
    result = _probe(*argv)
    loaded = sorted(set(result["roots"]) & set(HEAVY))
    assert loaded == [], f"volbench {' '.join(argv)} imported {loaded}"
    assert result["code"] == (0 if argv else 2)
    if argv == ("--help",):
        for name in COMMAND_HELP:
            assert f"\n    {name}" in result["out"]


def test_a_command_still_loads_what_it_needs():
    # the probe would pass vacuously if the subprocess never imported anything: a real command does
    result = _probe("estimate", "--help")
    assert {"pandas", "scipy"} <= set(result["roots"])
    assert "--window" in result["out"]


def test_the_light_command_table_matches_the_commands_parsers():
    parser = build_parser()
    sub = next(a for a in parser._actions if isinstance(a, type(parser._subparsers._group_actions[0])))
    registered = {a.dest: a.help for a in sub._choices_actions}
    assert registered == COMMAND_HELP, "update volbench.cli.COMMAND_HELP with the new or changed command"
    assert list(registered) == list(COMMAND_HELP)  # same help order


def test_an_unlisted_word_is_reported_by_the_full_parser(capsys):
    assert main(["no-such-command"]) == 2
    assert "invalid choice: 'no-such-command'" in capsys.readouterr().err


def test_the_window_command_is_parsed_without_the_core():
    result = _probe("gui", "--help")
    assert result["code"] == 0 and "FILE" in result["out"]
    loaded = sorted(set(result["roots"]) & {"pandas", "scipy", "arch", "statsmodels"})
    assert loaded == [], f"volbench gui --help imported {loaded}"
