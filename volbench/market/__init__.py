"""The market's view: option quotes, their implied vols, and how they compare with the history."""

from volbench.market.quotes import OptionQuotes, read_quotes
from volbench.market.surface import ExpiryView, ImpliedSurface, forward_variance, implied_surface
from volbench.market.versus import VersusHistory, VersusRow, versus_history

__all__ = [
    "ExpiryView",
    "ImpliedSurface",
    "OptionQuotes",
    "VersusHistory",
    "VersusRow",
    "forward_variance",
    "implied_surface",
    "read_quotes",
    "versus_history",
]
