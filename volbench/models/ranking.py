"""Fit several GARCH-type models to one series and rank them by BIC."""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable
from dataclasses import dataclass

from volbench import validate
from volbench.candidates import CandidateSet
from volbench.data.history import PriceHistory
from volbench.errors import Cancelled, VolbenchError
from volbench.models.family import MODEL_REGISTRY
from volbench.models.garch import FALLBACK, GarchFit, candidate_set, fit_garch
from volbench.settings import GarchSettings
from volbench.types import DEFAULT_ANNUALIZATION


def evidence(delta_bic: float) -> str:
    """Verbal strength of a BIC difference.

    Notes
    -----
    Kass & Raftery (1995), "Bayes factors", J. of the American Statistical Association 90(430),
    scale for 2 ln(Bayes factor), which a BIC difference approximates (recalled from memory):
    0-2 barely worth mentioning, 2-6 positive, 6-10 strong, above 10 very strong.
    """
    d = abs(delta_bic)
    if d < 2:
        return "barely worth mentioning"
    if d < 6:
        return "positive"
    if d < 10:
        return "strong"
    return "very strong"


def check_models(models: Iterable[str] | str) -> tuple[str, ...]:
    """``"all"``, one key or a list of keys -> unique model keys in the given order."""
    return validate.models(models)


@dataclass(frozen=True, eq=False)
class GarchComparison:
    """The fits of several models to one series, ranked by BIC.

    Attributes
    ----------
    name
        Series name.
    fits
        One :class:`GarchFit` per model, in the order asked.
    preferred
        Key of the model with the lowest BIC among fits without warnings, or ``None`` when none is
        usable (every forward vol then falls back to EWMA).
    delta_bic
        BIC of the runner-up usable fit minus the preferred one's (``None`` with fewer than two).
    ranking
        Model keys of the fitted models, lowest BIC first (usable or not).
    message
        One or two plain sentences: which model, by how much, and what was left out and why.
    """

    name: str
    fits: tuple[GarchFit, ...]
    preferred: str | None
    delta_bic: float | None
    ranking: tuple[str, ...]
    message: str

    def fit(self, model: str) -> GarchFit:
        """The fit of ``model``."""
        for f in self.fits:
            if f.model == model:
                return f
        raise VolbenchError(f"{self.name}: model {model!r} was not fitted; fitted: "
                            f"{', '.join(f.model for f in self.fits)}")

    @property
    def preferred_fit(self) -> GarchFit | None:
        return None if self.preferred is None else self.fit(self.preferred)

    def forward_vol(self, days: float) -> float:
        """Forward vol of the preferred model, or the first fit's fallback when none is usable."""
        return (self.preferred_fit or self.fits[0]).forward_vol(days)

    def candidates(self, days: int) -> CandidateSet:
        """Every fit's forward vol over ``days`` bars as a comparison candidate; the preferred fit leads."""
        return candidate_set(self.fits, self.preferred, days)

    def as_dict(self) -> dict:
        return {
            "name": self.name,
            "models": [f.as_dict() for f in self.fits],
            "preferred": self.preferred,
            "delta_bic": self.delta_bic,
            "ranking": list(self.ranking),
            "message": self.message,
        }


def rank(name: str, fits: tuple[GarchFit, ...]) -> GarchComparison:
    """Rank fits of one series by BIC and say which is preferred and by how much."""
    fitted = sorted((f for f in fits if math.isfinite(f.bic)), key=lambda f: f.bic)
    usable = [f for f in fitted if f.usable]
    skipped = [f for f in fitted if not f.usable and usable and f.bic < usable[0].bic]
    parts: list[str] = []
    if not usable:
        best, delta = None, None
        first = fits[0] if fits else None
        source = first.forward_vol_source if first is not None and first.forward_vol_source else FALLBACK
        parts.append(f"no model gave a usable fit; the forward vol is the fallback: {source}")
    else:
        best = usable[0]
        if len(usable) == 1:
            delta = None
            others = "the only usable fit" if len(fits) > 1 else "the only model fitted"
            parts.append(f"{best.label} is preferred ({others}; BIC {best.bic:.1f})")
        else:
            second = usable[1]
            delta = second.bic - best.bic
            parts.append(f"{best.label} is preferred: BIC {best.bic:.1f}, lower than {second.label} by "
                         f"{delta:.1f} ({evidence(delta)} evidence on the Kass-Raftery scale)")
    if not usable and fitted:
        parts.append(f"lowest BIC: {fitted[0].label} ({fitted[0].bic:.1f}), but every fit has warnings")
    for f in skipped:
        parts.append(f"{f.label} has a lower BIC ({f.bic:.1f}) but its fit has warnings, so its forward vol "
                     f"falls back to {f.fallback or FALLBACK}")
    return GarchComparison(name=name, fits=fits, preferred=None if best is None else best.model,
                           delta_bic=delta, ranking=tuple(f.model for f in fitted), message="; ".join(parts))


def fit_models(
    history: PriceHistory,
    settings: GarchSettings | None = None,
    *,
    annualization: float = DEFAULT_ANNUALIZATION,
    progress: Callable[[int, int, str], None] | None = None,
    cancel: Callable[[], bool] | None = None,
) -> GarchComparison:
    """Fit each model of ``settings.models`` (default: every registered model) and rank them by BIC.

    All fits share the same returns, distribution and mean, so their BICs are comparable
    (BIC = -2 loglik + k ln n; Schwarz 1978). Fits whose results carry warnings are ranked but never
    preferred, because their forward vol is the EWMA fallback. ``progress(done, total, label)`` is
    called before each fit; ``cancel()`` is polled between fits.

    Raises
    ------
    VolbenchError
        Bad settings, or fewer than 2 returns.
    Cancelled
        ``cancel()`` returned True (the fits done so far are dropped).
    """
    s = settings if settings is not None else GarchSettings()
    fits = []
    for i, m in enumerate(s.models):
        if cancel is not None and cancel():
            raise Cancelled(f"GARCH fitting of {history.name} cancelled after {i} of {len(s.models)} models")
        if progress is not None:
            progress(i, len(s.models), f"Fitting {MODEL_REGISTRY[m].label} to {history.name}")
        fits.append(fit_garch(history, m, s, annualization=annualization))
    return rank(history.name, tuple(fits))


__all__ = ["GarchComparison", "check_models", "evidence", "fit_models", "rank"]
