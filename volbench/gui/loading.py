"""Load several price files for the window: one bad file is reported, the others still load."""

from __future__ import annotations

from dataclasses import dataclass, replace
from pathlib import Path

from volbench.data import load_prices
from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError


@dataclass(frozen=True)
class Loaded:
    histories: tuple[PriceHistory, ...]
    files: tuple[str, ...]
    errors: tuple[str, ...]


def load_files(paths, *, date_format: str | None = None) -> Loaded:
    """:func:`volbench.data.load_prices` per file, flagged rows kept (the window applies the choice).

    Series names are made unique by file stem, as :func:`volbench.data.load_many` does.
    """
    histories: list[PriceHistory] = []
    files: list[str] = []
    errors: list[str] = []
    seen: set[str] = set()
    for p in dict.fromkeys(str(p) for p in paths):
        try:
            loaded = load_prices(p, date_format=date_format)
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
