"""The one error type that volbench raises for bad input.

Every message is meant for the user: it names the file (and line/column where known), what was
wrong, and what to do. Front ends show it as-is (the CLI prints one line and exits 2; the GUI
shows a dialog). Anything else escaping the core is a bug.
"""

from __future__ import annotations


class VolbenchError(Exception):
    """Bad input or an impossible request, with a message the user can act on."""


class Cancelled(Exception):
    """Long work stopped because its ``cancel()`` callable returned True (not an error)."""


class EstimatorUnavailable(VolbenchError):
    """An estimator cannot be computed on this history (missing columns, too few bars, ...).

    ``reason`` holds the short user-facing reason (e.g. "needs high/low columns").
    """

    def __init__(self, key: str, reason: str) -> None:
        super().__init__(f"{key}: {reason}")
        self.key = key
        self.reason = reason
