"""``volbench gui``: open the desktop workbench."""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

from volbench.cli import EXIT_BAD_INPUT

HEADLESS_PLATFORMS = ("offscreen", "minimal")


def register(sub) -> None:
    p = sub.add_parser(
        "gui", help="open the desktop workbench window",
        description="Open the workbench window with the given price files (default: the bundled "
                    "sample_prices/*.csv when present).",
    )
    p.add_argument("files", nargs="*", metavar="FILE", help="price CSV file(s) to open")
    p.set_defaults(func=run_gui)


def display_problem(environ=None, platform: str | None = None) -> str | None:
    """Why no window can open here (``None`` when a display looks available)."""
    env = os.environ if environ is None else environ
    platform = sys.platform if platform is None else platform
    if env.get("QT_QPA_PLATFORM", "").split(":")[0] in HEADLESS_PLATFORMS:
        return None
    if platform.startswith("linux") and not env.get("DISPLAY") and not env.get("WAYLAND_DISPLAY"):
        return "no display available (DISPLAY and WAYLAND_DISPLAY are not set)"
    return None


def default_files() -> list[str]:
    """The bundled sample files: ./sample_prices, else the one beside the package."""
    for folder in (Path.cwd() / "sample_prices", Path(__file__).resolve().parents[2] / "sample_prices"):
        files = sorted(folder.glob("*.csv"))
        if files:
            return [str(f) for f in files]
    return []


def run_gui(args: argparse.Namespace) -> int:
    problem = display_problem()
    if problem:
        print(f"volbench: {problem}, so the window cannot open; use the command line instead, "
              "e.g. 'volbench estimate FILE...'", file=sys.stderr)
        return EXIT_BAD_INPUT
    try:
        from volbench.gui.app import run
    except ImportError as exc:
        print(f"volbench: the window needs PySide6 and pyqtgraph, which cannot be imported ({exc}); "
              "use the command line instead, e.g. 'volbench estimate FILE...'", file=sys.stderr)
        return EXIT_BAD_INPUT
    return run(args.files or default_files())
