"""Candidate vols: what each result offers a comparison with the proposed pricing vol.

A result that can price an option (the estimates, a GARCH-type comparison, the scaling check, and
next a HAR forecast, an event-aware vol, an at-the-money implied vol...) implements
:class:`CandidateSource`: ``candidates(days)`` returns a :class:`CandidateSet` of
:class:`Candidate` vols for an option living ``days`` bars, with the reason for any it cannot
offer. :func:`volbench.pricing.compare.compare` sets every candidate of every source against the
pricing vol without knowing what produced it.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Protocol, runtime_checkable

from volbench.errors import VolbenchError


@dataclass(frozen=True)
class Candidate:
    """One vol offered for pricing an option.

    Attributes
    ----------
    source
        The kind of result it comes from (``"estimator"``, ``"garch"``, ``"scaling"``, ...): the
        comparison table's ``source`` column.
    key, label
        Unique key within a comparison (``"yang_zhang"``, ``"garch:gjr"``) and the label shown.
    vol
        Annualized vol, a finite decimal > 0.
    window
        Bars behind the vol (the estimator window, or the option's life for a forecast).
    ci_low, ci_high
        Its interval when the source has one (``None`` otherwise).
    note
        Where the number comes from or how it was made (method, source, caveats).
    headline
        The source's lead candidate (e.g. the preferred fit): the reading names it.
    fallback
        When the number is a fallback's rather than the model's own: what it falls back to and why.
    on_pricing_basis
        True when ``vol`` is already a Black-Scholes-Merton vol over ACT/365 years (an implied
        vol); False for a vol annualized over trading bars, which a comparison with an option life
        by date rescales (docs/METHODS.md, "Day counts and the option's life").
    """

    source: str
    key: str
    label: str
    vol: float
    window: int | None = None
    ci_low: float | None = None
    ci_high: float | None = None
    note: str = ""
    headline: bool = False
    fallback: str | None = None
    on_pricing_basis: bool = False

    def __post_init__(self) -> None:
        v = float(self.vol)
        if not (math.isfinite(v) and v > 0):
            raise VolbenchError(f"candidate {self.key!r}: vol must be a finite number > 0, got {self.vol!r}")
        object.__setattr__(self, "vol", v)


@dataclass(frozen=True)
class CandidateSet:
    """The candidates one result offers for one option life, and why any are missing.

    Attributes
    ----------
    source
        The result's kind; the key under which a comparison says why the whole set is missing.
    items
        The candidates, in display order.
    unavailable
        Candidate key (or ``source`` for the whole set) -> why it cannot be offered.
    title, what
        How the reading names the source and its number ("GARCH-family fit", "forward vol").
    """

    source: str
    items: tuple[Candidate, ...] = ()
    unavailable: Mapping[str, str] = field(default_factory=dict)
    title: str = ""
    what: str = "vol"

    def __post_init__(self) -> None:
        object.__setattr__(self, "items", tuple(self.items))
        object.__setattr__(self, "unavailable", MappingProxyType(dict(self.unavailable)))

    @classmethod
    def missing(cls, source: str, reason: str) -> CandidateSet:
        """A set with no candidate, saying why (``"not requested"``, an error message...)."""
        return cls(source, (), {source: reason})

    @property
    def headline(self) -> Candidate | None:
        """The candidate the reading names (the one flagged, else none)."""
        return next((c for c in self.items if c.headline), None)

    def candidates(self, days: int) -> CandidateSet:
        """A set is its own source (so a ready-made or missing set can be passed like a result)."""
        return self


@runtime_checkable
class CandidateSource(Protocol):
    """Anything that offers comparison candidates for an option living ``days`` bars."""

    def candidates(self, days: int) -> CandidateSet: ...
