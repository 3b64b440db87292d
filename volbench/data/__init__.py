"""Price import, the price-history model and data-quality findings."""

from volbench.data.history import Finding, PriceHistory
from volbench.data.load import load_many, load_prices

__all__ = ["Finding", "PriceHistory", "load_many", "load_prices"]
