"""Price import, the price-history model and data-quality findings."""

from volbench.data.history import Finding, PriceHistory
from volbench.data.load import load_prices, load_many

__all__ = ["Finding", "PriceHistory", "load_prices", "load_many"]
