"""The "changed" cue: after an input triggers a recompute, the status bar says what changed and
which results were recomputed, so an accidental edit can never pass unnoticed.

:func:`cue_text` words it; the window shows it in a highlighted label beside the status line
(``objectName``: ``changed_cue``) and replaces any stale error the status line still showed.
"""

from __future__ import annotations

from collections.abc import Iterable

INPUT_WORDS: dict[str, str] = {
    "window": "Window", "annualization": "Annualization", "as_of": "As of", "pricing_vol": "Pricing vol",
    "days": "Days to expiry", "strike": "Strike", "rate": "Rate", "dividend_yield": "Dividend yield",
    "kind": "Option type", "garch_model": "GARCH model", "garch_dist": "GARCH distribution",
    "cone_estimator": "Cone estimator", "exclude_flagged": "Flagged rows", "linked": "Window link",
    "hodges_tompkins": "Hodges-Tompkins correction", "ewma_lambda": "EWMA decay",
}
"""Words for the inputs a user changes (state field -> the control's label)."""

RESULT_WORDS: dict[str, str] = {
    "rolling": "rolling vols", "estimates": "estimates", "cone": "cone", "placement": "cone placement",
    "scaling": "scaling check", "garch": "GARCH fits", "forward": "forward vols", "comparison": "comparison",
    "bands": "price bands",
}
"""Words for the results a change recomputes (job kind -> plain words); other kinds use their name."""


def cue_text(inputs: Iterable[str], kinds: Iterable[str]) -> str:
    """``"Changed: Window → recomputed estimates, rolling vols"`` (empty when nothing was recomputed).

    ``inputs`` are the state fields a user changed, ``kinds`` the jobs recomputed for it.
    """
    names = [INPUT_WORDS[n] for n in sorted(inputs) if n in INPUT_WORDS]
    done = [RESULT_WORDS.get(k, k) for k in kinds]
    if not names or not done:
        return ""
    return f"Changed: {', '.join(names)} → recomputed {', '.join(done)}"
