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
        cmd_scaling,
        cmd_survey,
    )

    return (cmd_estimate, cmd_export, cmd_garch, cmd_gui, cmd_hindsight, cmd_implied, cmd_pricing, cmd_realized,
            cmd_scaling, cmd_survey, cmd_memo)


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="volbench",
        description="Estimate, check and defend the volatility used to price an option, from price CSVs.",
        epilog="Estimates are statistical and carry model risk; they are not advice. "
               "Your firm's model-validation policy governs their use.",
    )
    parser.add_argument("--version", action="version", version=f"volbench {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    sub.required = True
    for module in command_modules():
        module.register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns the exit code."""
    for stream in (sys.stdout, sys.stderr):  # labels such as "GARCH(1,1) → EWMA fallback" on any console
        try:
            stream.reconfigure(errors="backslashreplace")
        except (AttributeError, ValueError):
            pass
    parser = build_parser()
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
