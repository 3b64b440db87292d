"""The continuity check as the scaling check's fifth property, and the signature plot beside the
variance against horizon, for a history analysed by day from intraday bars.

Brownian motion has continuous paths. With intraday bars behind the daily series, the ratio jump
test of :mod:`volbench.intraday.jumps` (realized variance against bipower variation, per day) tests
that property; its family p-value (the largest daily statistic over the days tested, Sidak) joins
the other four properties' p-values in the scaling check's Holm family, so "rejected" on any of the
five keeps its family bound alpha. A file of daily bars gets the low-power jump screen on daily
returns instead (:func:`volbench.intraday.jumps.lee_mykland_screen`, :func:`daily_continuity`), in
the same Holm family, its verdict labelled low-power.
Methods and sources: docs/METHODS.md, "Intraday data, realized measures and jumps".
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.format import pct
from volbench.intraday.jumps import (
    JUMP_ALPHA,
    PROPERTY,
    ContinuityCheck,
    continuity_check,
    lee_mykland_screen,
)
from volbench.intraday.signature import SignaturePlot, signature_plot
from volbench.scaling.verdicts import Status, Verdict


@dataclass(frozen=True)
class IntradayPart:
    """What the intraday bars add to the scaling check: the continuity check and the signature plot,
    with the reason for any part that could not be computed."""

    continuity: ContinuityCheck | None
    signature: SignaturePlot | None
    unavailable: dict

    @property
    def p_value(self) -> float | None:
        return None if self.continuity is None else self.continuity.family_p_value


def intraday_part(history: PriceHistory, alpha: float, annualization: float,
                  jump_alpha: float = JUMP_ALPHA) -> IntradayPart | None:
    """The continuity check and signature plot of the intraday bars behind ``history`` (``None`` for
    a file of daily bars)."""
    if history.intraday is None:
        return None
    src = history.intraday.covering(history)
    unavailable: dict[str, str] = {}
    cont = sig = None
    try:
        cont = continuity_check(src.measures, alpha=jump_alpha, verdict_alpha=alpha, annualization=annualization)
    except VolbenchError as exc:
        unavailable[PROPERTY] = str(exc)
    try:
        sig = signature_plot(src.bars, src.layout, annualization=annualization)
    except VolbenchError as exc:
        unavailable["signature"] = str(exc)
    return IntradayPart(cont, sig, unavailable)


def daily_continuity(history: PriceHistory, alpha: float,
                     jump_alpha: float = JUMP_ALPHA) -> tuple[ContinuityCheck | None, str | None]:
    """The low-power jump screen on daily returns for a file of daily bars, or ``(None, reason)``.

    Notes
    -----
    Lee & Mykland (2008), local volatility by bipower variation over the previous K = 16 returns,
    the current return excluded; p-values from the simulated jump-free null, cached per length
    (:func:`volbench.intraday.jumps.lee_mykland_screen`; docs/METHODS.md, "Intraday data, realized
    measures and jumps").
    """
    try:
        return lee_mykland_screen(history, alpha=jump_alpha, verdict_alpha=alpha), None
    except VolbenchError as exc:
        return None, str(exc)


def continuity_verdict(part: IntradayPart | ContinuityCheck, status: Status, alpha: float) -> Verdict:
    """The continuity check's verdict with its status from the five-property Holm family."""
    v = (part.continuity if isinstance(part, IntradayPart) else part).verdict
    msg = v.message
    if status == "doubtful":
        msg = msg.replace("Paths are not continuous", "Paths may not be continuous")
        msg += (f" Doubtful: significant on its own at the {alpha:g} level, but not once the five properties "
                "are judged together (Holm).")
    return replace(v, status=status, message=msg)


def five_property_false_alarm(four: dict, alpha: float, daily: bool = False) -> dict:
    """The family false-alarm record of the four daily properties, extended to the fifth.

    With ``daily`` the fifth is the jump screen on daily returns: same combination, its family
    p-value read from a simulated jump-free null, so its size is alpha up to simulation error
    (tests/scaling/test_daily_continuity.py measures it and the five-property rate); it reads the
    same returns as the normality test, so independence is an approximation there.

    Notes
    -----
    The continuity test reads the intraday path within sessions, the other four the daily returns:
    treated as independent, the chance of at least one non-consistent verdict is
    1 - (1 - rate4) (1 - alpha), the continuity test taken at its nominal size alpha (its family
    p-value is Sidak's, exact for independent days). Simulation (tests/scaling/test_continuity.py,
    100 days of 78 five-minute returns) measures the five-property rate within a point of this, but
    the continuity verdict alone at about 2 alpha: the ratio statistic's far tail is heavier than
    normal at that many returns a day. Holm bounds any "rejected" by alpha given each test's size.
    """
    rate = 1.0 - (1.0 - four["not_consistent"]) * (1.0 - alpha)
    sentence = (f"On a perfectly Brownian series of about this length, at least one of the five properties is "
                f"called doubtful or rejected about {pct(rate, 0)} of the time at level {alpha:g}, by chance alone; "
                f"any 'rejected' about {pct(alpha, 0)} (Holm).")
    if daily:
        extra = ("; with the low-power jump screen on daily returns at its nominal size (simulated null), treated "
                 "as independent of the four: 1 - (1 - rate) (1 - alpha)")
    else:
        extra = ("; with the continuity check at its nominal size, treated as independent of the four: "
                 "1 - (1 - rate) (1 - alpha) (simulation measures the continuity verdict alone at about twice its "
                 "level with 78 returns a day)")
    return {**four, "not_consistent": rate, "bonferroni_bound": min(1.0, 5 * alpha), "properties": 5,
            "method": four["method"] + extra, "sentence": sentence}
