"""Load several price files for the window: one bad file is reported, the others still load.

Runs in a worker thread (:class:`~volbench.gui.workers.Dispatcher` kind ``"load"``): progress is
reported per file and stage, and a cancel request stops between stages.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace
from pathlib import Path

from volbench.data import load_prices
from volbench.data.history import PriceHistory
from volbench.data.options import ImportOptions
from volbench.errors import VolbenchError


@dataclass(frozen=True)
class Loaded:
    histories: tuple[PriceHistory, ...]
    files: tuple[str, ...]
    errors: tuple[str, ...]


def load_files(paths, options: ImportOptions | None = None, *, taken=(),
               progress: Callable[[int, int, str], None] | None = None,
               cancel: Callable[[], bool] | None = None) -> Loaded:
    """:func:`volbench.data.load_prices` per file, flagged rows kept (the window applies the choice).

    Series names are made unique by file stem, as :func:`volbench.data.load_many` does, also
    against the names in ``taken`` (series already shown). :class:`volbench.data.load.Cancelled`
    propagates when ``cancel()`` turns true.
    """
    options = (options or ImportOptions()).with_changes(exclude_flagged=False)
    histories: list[PriceHistory] = []
    files: list[str] = []
    errors: list[str] = []
    seen: set[str] = set(taken)
    unique = list(dict.fromkeys(str(p) for p in paths))
    n = len(unique)
    for i, p in enumerate(unique):
        def step(done: int, total: int, text: str, i=i) -> None:
            if progress is not None:
                progress(i * total + done, n * total, text)

        try:
            loaded = load_prices(p, options, progress=step, cancel=cancel)
        except VolbenchError as exc:
            errors.append(str(exc))
            continue
        except OSError as exc:
            errors.append(f"{p}: cannot be read ({exc.strerror or exc}); check the path and permissions")
            continue
        files.append(p)
        for h in loaded:
            if h.name in seen:
                h = replace(h, name=f"{h.name} ({Path(p).stem})")
            seen.add(h.name)
            histories.append(h)
    return Loaded(tuple(histories), tuple(files), tuple(errors))
