"""``volbench gui``: open the desktop workbench."""

from __future__ import annotations

import argparse
import ctypes.util
import os
import sys
from collections.abc import Callable

from volbench.cli import EXIT_BAD_INPUT
from volbench.gui import qt_problem

HEADLESS_PLATFORMS = ("offscreen", "minimal")

# System libraries Qt 6's X11 (xcb) platform plugin loads, with the Debian/Ubuntu package of each.
# Without one of them Qt aborts the process, so they are checked before the window starts.
XCB_LIBRARIES = {
    "xcb-cursor": "libxcb-cursor0",
    "xcb-icccm": "libxcb-icccm4",
    "xcb-keysyms": "libxcb-keysyms1",
    "xcb-image": "libxcb-image0",
    "xcb-render-util": "libxcb-render-util0",
    "xcb-shape": "libxcb-shape0",
    "xcb-randr": "libxcb-randr0",
    "xcb-xkb": "libxcb-xkb1",
    "xkbcommon-x11": "libxkbcommon-x11-0",
    "fontconfig": "libfontconfig1",
    "EGL": "libegl1",
}


def register(sub) -> None:
    p = sub.add_parser(
        "gui", help="open the desktop workbench window",
        description="Open the workbench window with the given price files (default: the bundled "
                    "sample_prices/*.csv when present).",
    )
    p.add_argument("files", nargs="*", metavar="FILE", help="price CSV file(s) to open")
    p.set_defaults(func=run_gui)


def display_problem(environ=None, platform: str | None = None,
                    find_library: Callable[[str], str | None] = ctypes.util.find_library) -> str | None:
    """Why no window can open here (``None`` when a display looks available).

    On Linux under X11, Qt also needs the system libraries in :data:`XCB_LIBRARIES`; without one
    of them Qt aborts the process, so they are checked here first and named with their packages.
    """
    env = os.environ if environ is None else environ
    platform = sys.platform if platform is None else platform
    qpa = env.get("QT_QPA_PLATFORM", "").split(":")[0]
    if qpa in HEADLESS_PLATFORMS:
        return None
    if not platform.startswith("linux"):
        return None
    if not env.get("DISPLAY") and not env.get("WAYLAND_DISPLAY"):
        return "no display available (DISPLAY and WAYLAND_DISPLAY are not set)"
    uses_x11 = qpa == "xcb" or (qpa == "" and not env.get("WAYLAND_DISPLAY"))
    missing = [pkg for lib, pkg in XCB_LIBRARIES.items() if uses_x11 and find_library(lib) is None]
    if missing:
        return (f"the Qt window needs system libraries that are not installed "
                f"(Debian/Ubuntu: sudo apt-get install {' '.join(missing)})")
    return None


def run_gui(args: argparse.Namespace) -> int:
    problem = display_problem()
    if problem:
        print(f"volbench: {problem}, so the window cannot open; use the command line instead, "
              "e.g. 'volbench estimate FILE...'", file=sys.stderr)
        return EXIT_BAD_INPUT
    qt = qt_problem()
    if qt:
        print(f"volbench: the window needs PySide6 and pyqtgraph, which cannot be imported ({qt}); "
              "use the command line instead, e.g. 'volbench estimate FILE...'", file=sys.stderr)
        return EXIT_BAD_INPUT
    from volbench.gui.app import run  # Qt is imported only when the window opens

    return run(args.files, samples_when_empty=True)  # the sample list is read after the first paint
