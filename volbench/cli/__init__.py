"""``volbench`` command line: a thin argparse front end over the core.

Each sub-command lives in a module ``cmd_<name>.py`` in this package that defines
``register(subparsers)``, and is listed once in :func:`command_modules` (a command = its file plus
one registration line). Exit codes: 0 success, 2 bad input (one line on stderr, no traceback), 1
internal error.
"""

from __future__ import annotations

import argparse
import sys
from types import ModuleType

from volbench import __version__
from volbench.errors import VolbenchError

EXIT_OK, EXIT_INTERNAL, EXIT_BAD_INPUT = 0, 1, 2


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage errors as one line and exit code 2."""

    def error(self, message: str) -> None:  # pragma: no cover - exercised through main
        raise SystemExit(f"{self.prog}: error: {message} (see '{self.prog} --help')")


def command_modules() -> tuple[ModuleType, ...]:
    """Every sub-command module, in help order (imported here, when the parser is built)."""
    from volbench.cli import (
        cmd_estimate,
        cmd_export,
        cmd_garch,
        cmd_gui,
        cmd_hindsight,
        cmd_implied,
        cmd_memo,
        cmd_pricing,
        cmd_realized,
        cmd_replay,
        cmd_scaling,
        cmd_survey,
    )

    return (cmd_estimate, cmd_export, cmd_garch, cmd_gui, cmd_hindsight, cmd_implied, cmd_pricing, cmd_realized,
            cmd_replay, cmd_scaling, cmd_survey, cmd_memo)


COMMAND_HELP: dict[str, str] = {
    "estimate": "point estimates of every volatility estimator",
    "check": "data-quality findings for price files",
    "export": "write the numbers behind a pricing vol to .xlsx, .csv or .json",
    "garch": "GARCH-family fits and forward vols over an option's life",
    "gui": "open the desktop workbench window",
    "hindsight": "how each candidate vol would have forecast the vol that followed",
    "implied": "implied vol of a premium, or of every quote in an option-quotes file",
    "cone": "volatility cone: percentiles of rolling realized vol per window",
    "compare": "set a proposed pricing vol against the history and reprice the option",
    "price": "Black-Scholes-Merton price and greeks of a call and a put",
    "realized": "realized vol, signature plot, jump days and HAR forecast from intraday bars",
    "replay": "rebuild an .xlsx or .json export from its record and compare every cell",
    "scaling": "check that returns scale like Brownian motion (variance ratio, normality, ...)",
    "survey": "survey many series at once: estimates, cone, scaling verdicts (and GARCH)",
    "memo": "write a PDF vol memo for a pricing vol (estimates, cone, scaling, GARCH, comparison)",
}
"""Every command word and its help line, in help order: ``volbench --help`` (and ``--version``)
lists them without importing the commands, whose modules load pandas and scipy. A command
missing here still runs (any command word builds the full parser); tests/cli/test_startup.py
checks this table against the commands' own parsers."""


def _top_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="volbench",
        description="Estimate, check and defend the volatility used to price an option, from price CSVs.",
        epilog="Estimates are statistical and carry model risk; they are not advice. "
               "Your firm's model-validation policy governs their use.",
    )
    parser.add_argument("--version", action="version", version=f"volbench {__version__}")
    return parser


def _subparsers(parser: argparse.ArgumentParser):
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    sub.required = True
    return sub


def build_parser() -> argparse.ArgumentParser:
    """The full parser: every command module imported and registered."""
    parser = _top_parser()
    sub = _subparsers(parser)
    for module in command_modules():
        module.register(sub)
    return parser


def light_parser() -> argparse.ArgumentParser:
    """The top-level parser alone (commands listed from :data:`COMMAND_HELP`, none imported): what
    ``volbench``, ``volbench --help`` and ``volbench --version`` need."""
    parser = _top_parser()
    sub = _subparsers(parser)
    for name, text in COMMAND_HELP.items():
        sub.add_parser(name, help=text, add_help=False)
    return parser


def light_command_modules() -> tuple[ModuleType, ...]:
    """Command modules that import no heavy library when loaded: their commands are parsed without
    importing the others (the window paints its frame before pandas and scipy load)."""
    from volbench.cli import cmd_gui

    return (cmd_gui,)


def parser_for(argv: list[str]) -> argparse.ArgumentParser:
    """The parser ``argv`` needs: the light one for help, version or a light command's word, else
    the full one."""
    word = next((a for a in argv if not a.startswith("-")), None)
    if word is None:
        return light_parser()
    parser = _top_parser()
    sub = _subparsers(parser)
    for module in light_command_modules():
        module.register(sub)
    return parser if word in sub.choices else build_parser()


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns the exit code."""
    for stream in (sys.stdout, sys.stderr):  # labels such as "GARCH(1,1) → EWMA fallback" on any console
        try:
            stream.reconfigure(errors="backslashreplace")
        except (AttributeError, ValueError):
            pass
    words = sys.argv[1:] if argv is None else list(argv)
    parser = parser_for(words)
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:
        if isinstance(exc.code, str):
            print(exc.code, file=sys.stderr)
            return EXIT_BAD_INPUT
        return int(exc.code or 0)
    except VolbenchError as exc:  # a setting refused by volbench.validate (argparse ``type=``)
        print(f"volbench: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    args.typed_argv = list(sys.argv[1:] if argv is None else argv)  # recorded as provenance
    try:
        return int(args.func(args) or 0)
    except VolbenchError as exc:
        print(f"volbench: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except BrokenPipeError:  # output piped into head etc.
        return EXIT_OK
    except KeyboardInterrupt:
        print("volbench: interrupted", file=sys.stderr)
        return EXIT_INTERNAL
    except Exception as exc:  # noqa: BLE001 - an internal error: one line, never a traceback
        print(f"volbench: internal error ({type(exc).__name__}: {exc}); please report it "
              "with the command and file that caused it", file=sys.stderr)
        return EXIT_INTERNAL
