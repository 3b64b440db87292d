"""volbench: choose and defend the volatility used to price an option.

The core (everything outside :mod:`volbench.gui`) is Qt-free: pure functions and small frozen
dataclasses over numpy and pandas.
"""

from volbench.errors import VolbenchError

__version__ = "0.1.0"

__all__ = ["VolbenchError", "__version__"]
