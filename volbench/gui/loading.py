"""Load several price files for the window: one bad file is reported, the others still load.

The window runs :func:`load_files` as its ``load`` job (:mod:`volbench.gui.jobs`): progress is
reported per file and stage, and a cancel request stops between stages. The work itself is the
core's :func:`volbench.data.load.load_each`; only the window's policy is added here.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace

from volbench.data.load import Loaded, load_each
from volbench.data.options import ImportOptions
from volbench.intraday.days import by_days

__all__ = ["Loaded", "load_files"]


def load_files(paths, options: ImportOptions | None = None, *, taken=(),
               progress: Callable[[int, int, str], None] | None = None,
               cancel: Callable[[], bool] | None = None, session_break: float | None = None) -> Loaded:
    """:func:`~volbench.data.load.load_each` with flagged rows kept (the window applies the choice to
    what it shows, so changing it does not read the files again); intraday files come back analysed
    by day (:func:`volbench.intraday.days.by_days`, sessions by calendar date unless ``session_break``)."""
    options = (options or ImportOptions()).with_changes(exclude_flagged=False)
    loaded = load_each(paths, options, taken=taken, progress=progress, cancel=cancel)
    return replace(loaded, histories=tuple(by_days(h, session_break) for h in loaded.histories))
