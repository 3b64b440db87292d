"""The result of surveying one series: a frozen record whose ``as_dict`` is the JSON row."""

from __future__ import annotations

from dataclasses import dataclass, field

from volbench.estimators.base import Estimate

SEVERITIES = ("error", "warning", "info")


@dataclass(frozen=True)
class SurveyRecord:
    """One series of a survey: what the single-series commands would say, condensed to one row.

    Attributes
    ----------
    name, source
        Series name (symbol, or file stem; made unique across files as ``volbench estimate`` does)
        and the file it came from.
    rows, as_of
        Usable rows and the last date (the as-of date of every figure); ``None`` when the file
        could not be read.
    window, days
        Estimation window and option life in bars.
    estimates
        Estimator key -> :class:`~volbench.estimators.base.Estimate` over the last ``window``
        bars (``volbench estimate --window``), with its 95 % interval.
    current_vol
        The cone estimator's vol over the last ``days`` bars: the value placed in the cone.
    cone_percentile
        Percentile (0-100) of ``current_vol`` in the cone at the option's life
        (:meth:`volbench.pricing.cone.Cone.place`).
    pricing_vol, pricing_vol_percentile
        The proposed vol for this series and its percentile in the same cone column
        (``volbench compare``'s cone percentile).
    verdicts
        Scaling-check property -> status (``consistent``, ``doubtful``, ``rejected``).
    forward_vol, forward_vol_source
        GARCH forward vol over ``days`` bars and where it comes from: the preferred model's label,
        or the EWMA fallback with the reason (only with GARCH requested).
    findings
        Count of data-quality findings by severity.
    unavailable
        Part -> reason, for every figure that could not be computed (an estimator lacking columns,
        a cone or scaling check the history is too short for, no pricing vol for this series).
    series
        The series' name inside its file (what :func:`volbench.data.load_prices` calls it), to
        reopen it; ``name`` may carry the file stem to stay unique. Not part of the JSON row.
    error
        Why the series could not be surveyed at all (file missing or unreadable, too few rows for
        any estimate, an internal error); ``None`` when it was surveyed.
    """

    name: str
    source: str | None
    rows: int | None = None
    as_of: str | None = None
    window: int | None = None
    days: int | None = None
    estimates: dict[str, Estimate] = field(default_factory=dict)
    current_vol: float | None = None
    cone_percentile: float | None = None
    pricing_vol: float | None = None
    pricing_vol_percentile: float | None = None
    verdicts: dict[str, str] = field(default_factory=dict)
    forward_vol: float | None = None
    forward_vol_source: str | None = None
    findings: dict[str, int] = field(default_factory=dict)
    unavailable: dict[str, str] = field(default_factory=dict)
    error: str | None = None
    series: str | None = None
    life: dict | None = None

    @property
    def ok(self) -> bool:
        """True when the series was surveyed (its figures may still be partly unavailable)."""
        return self.error is None

    def as_dict(self) -> dict:
        """The JSON row of ``volbench survey --format json``."""
        return {
            "name": self.name,
            "source": self.source,
            "rows": self.rows,
            "as_of": self.as_of,
            "window": self.window,
            "days": self.days,
            "estimates": {k: e.as_dict() for k, e in self.estimates.items()},
            "current_vol": self.current_vol,
            "cone_percentile": self.cone_percentile,
            "pricing_vol": self.pricing_vol,
            "pricing_vol_percentile": self.pricing_vol_percentile,
            "verdicts": dict(self.verdicts),
            "forward_vol": self.forward_vol,
            "forward_vol_source": self.forward_vol_source,
            "findings": {s: int(self.findings.get(s, 0)) for s in SEVERITIES},
            "unavailable": dict(self.unavailable),
            "error": self.error,
            "life": self.life,
        }


def failed(name: str, source: str | None, error: str, **known) -> SurveyRecord:
    """A record for a file or series that could not be surveyed."""
    return SurveyRecord(name=name, source=source, error=error, **known)
