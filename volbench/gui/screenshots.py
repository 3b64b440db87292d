"""Write the README screenshots: the whole window and each pane, with the bundled sample data.

Run ``QT_QPA_PLATFORM=offscreen python -m volbench.gui.screenshots --out resources/screenshots``.
Settings are redirected to a temporary folder, so the user's remembered settings are untouched.
"""

from __future__ import annotations

import argparse
import tempfile
from pathlib import Path

from PySide6.QtCore import QSettings

from volbench.samples import sample_files

SIZE = (1600, 1000)
# pane key -> (file name, series shown)
SHOTS = {
    "data": ("data.png", "quillon_textiles"),
    "prices": ("prices.png", "quillon_textiles"),
    "rolling": ("rolling.png", "ironvale_mining"),
    "scaling": ("scaling.png", "ironvale_mining"),
    "cone": ("cone.png", "ironvale_mining"),
    "model": ("model.png", "ironvale_mining"),
    "life": ("life.png", "ironvale_mining"),
    "promise": ("promise.png", "ironvale_mining"),
    "events": ("events.png", "ironvale_mining"),
    "hindsight": ("hindsight.png", "ironvale_mining"),
    "market": ("market.png", "ironvale_mining"),
    "intraday": ("intraday.png", "gullridge_energy_5min"),
}
EXTRAS = {"events": ("events", "ironvale_mining_events.csv"), "market": ("quotes", "ironvale_mining_quotes.csv")}
"""Panes shown with a sample file of their own (the events and quotes of Ironvale Mining)."""


def write_screenshots(out: str | Path, files=None, size: tuple[int, int] = SIZE) -> list[Path]:
    """Save window.png and one PNG per pane into ``out``; returns the paths written."""
    out = Path(out)
    out.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        QSettings.setPath(QSettings.Format.IniFormat, QSettings.Scope.UserScope, tmp)
        from volbench.gui.app import application
        from volbench.gui.state import Choices
        from volbench.gui.window import MainWindow

        app = application()
        w = MainWindow(synchronous=True, choices=Choices(garch_model="all"))
        w.resize(*size)
        w.show()
        samples = Path(sample_files()[0]).parent
        w.open_files(list(files or [*sample_files(), samples / "intraday" / "gullridge_energy_5min.csv"]))
        written = []
        for key, (name, series) in SHOTS.items():
            if key not in w.panes:
                continue
            if any(h.name == series for h in w.state.histories):
                w.state.set("selected", series)
            if key in EXTRAS and not files:
                folder, extra = EXTRAS[key]
                if key == "events":
                    from volbench.gui.events_menu import set_events

                    set_events(w, str(samples / folder / extra))
                else:
                    w.panes["market"].open_quotes(str(samples / folder / extra))
            w.tabs.setCurrentWidget(w.panes[key])
            if key == "model":
                w.fit_all_series()
            for _ in range(3):
                app.processEvents()
            path = out / name
            w.panes[key].grab().save(str(path))
            written.append(path)
        if any(h.name == "ironvale_mining" for h in w.state.histories):
            w.state.set("selected", "ironvale_mining")
        w.tabs.setCurrentWidget(w.panes["rolling"])
        for _ in range(3):
            app.processEvents()
        path = out / "window.png"
        w.grab().save(str(path))
        written.append(path)
        w.close()
    return written


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(prog="python -m volbench.gui.screenshots", description=__doc__.splitlines()[0])
    ap.add_argument("--out", default="resources/screenshots", help="folder to write into")
    ap.add_argument("files", nargs="*", help="price files (default: the bundled samples)")
    ap.add_argument("--size", default=f"{SIZE[0]}x{SIZE[1]}", metavar="WxH",
                    help="window size in pixels (default %(default)s; e.g. 1366x768 to check a small screen)")
    args = ap.parse_args(argv)
    try:
        size = tuple(int(v) for v in args.size.lower().split("x"))
    except ValueError:
        size = ()
    if len(size) != 2 or min(size) < 200:
        ap.error(f"--size must be WIDTHxHEIGHT in pixels, e.g. 1366x768, got {args.size!r}")
    for p in write_screenshots(args.out, args.files or None, size):
        print(p)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
