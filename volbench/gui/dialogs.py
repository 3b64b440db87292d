"""Message dialogs, the error guard, the overwrite question and the help window.

Every user-facing failure goes through :func:`show_error`: a :class:`VolbenchError` message is
shown as written by the core (it names the file, line and what to do); anything else is an
internal error, said plainly, without a traceback.
"""

from __future__ import annotations

import html
import sys
import traceback
from collections.abc import Callable
from pathlib import Path

from PySide6.QtWidgets import (
    QDialog,
    QDialogButtonBox,
    QMessageBox,
    QTextBrowser,
    QVBoxLayout,
    QWidget,
)

from volbench import __version__
from volbench.errors import VolbenchError


def error_text(exc: BaseException) -> str:
    """What the user reads for ``exc``."""
    if isinstance(exc, VolbenchError):
        return str(exc)
    return (f"Something went wrong inside volbench ({type(exc).__name__}: {exc}). Your files are "
            "unchanged. Please report it with the file and the steps that led here.")


def show_error(parent: QWidget | None, title: str, exc: BaseException | str) -> None:
    """A warning dialog with the user-facing message."""
    text = exc if isinstance(exc, str) else error_text(exc)
    QMessageBox.warning(parent, f"volbench: {title}", text)


def guarded(parent: QWidget | None, title: str, fn: Callable[[], object]):
    """Run ``fn``; a :class:`VolbenchError` becomes a dialog and ``None`` is returned."""
    try:
        return fn()
    except VolbenchError as exc:
        show_error(parent, title, exc)
        return None
    except OSError as exc:
        show_error(parent, title, f"{exc.filename or ''}: {exc.strerror or exc}. "
                                  "Check the folder exists and you may write there.")
        return None


def confirm_overwrite(parent: QWidget | None, path: str | Path) -> bool:
    """Ask before replacing an existing file."""
    answer = QMessageBox.question(
        parent, "volbench: replace file?",
        f"{Path(path).name} already exists in {Path(path).parent}.\nReplace it?",
        QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.No,
        QMessageBox.StandardButton.No)
    return answer == QMessageBox.StandardButton.Yes


def ask_yes_no(parent: QWidget | None, title: str, text: str) -> bool:
    """A yes/no question (default No)."""
    answer = QMessageBox.question(
        parent, f"volbench: {title}", text,
        QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.No, QMessageBox.StandardButton.No)
    return answer == QMessageBox.StandardButton.Yes


def install_excepthook(parent_getter: Callable[[], QWidget | None]) -> None:
    """Show unexpected exceptions in a dialog (the traceback goes to stderr for bug reports)."""
    previous = sys.excepthook

    def hook(exc_type, exc, tb):
        if issubclass(exc_type, KeyboardInterrupt):
            previous(exc_type, exc, tb)
            return
        traceback.print_exception(exc_type, exc, tb, file=sys.stderr)
        try:
            show_error(parent_getter(), "error", exc)
        except Exception as inner:  # noqa: BLE001 - never let the hook itself raise
            print(f"volbench: could not show the error dialog ({inner})", file=sys.stderr)

    sys.excepthook = hook


CAUTIONS = (
    ("Volatility estimates are statistical: each is a noisy reading of a quantity nobody observes, "
     "computed under assumptions the market need not meet."),
    ("They carry model risk: a different estimator, window, annualization or data policy gives a "
     "different number, and the comparison table shows how much that moves the option price."),
    ("Nothing here is advice. Your firm's model-validation policy and licensed practice govern "
     "whether and how these numbers are used to price or risk-manage a position."),
)


def help_html() -> str:
    """Help text: cautions, how to use the window, and what each estimator assumes."""
    from volbench.estimators import REGISTRY
    from volbench.models import MODEL_REGISTRY
    from volbench.names import estimator_name

    def source(s) -> str:  # the decay-weighted estimator is described by its decay; its source is in the docs
        return "the standard daily decay 0.94; source in docs/METHODS.md" if "lam" in s.options else s.source

    rows = "".join(
        f"<tr><td><b>{html.escape(estimator_name(s.key))}</b></td><td>{html.escape(s.assumes)}</td>"
        f"<td>{html.escape(source(s))}</td><td>{', '.join(sorted(s.needs))}</td></tr>"
        for s in REGISTRY.values())
    rows += "".join(
        f"<tr><td><b>{html.escape(m.label)}</b></td><td>{html.escape(m.assumes)} Fits can fail to converge, and "
        "a persistence near or above one makes long-horizon forecasts unreliable (the forward vol then falls "
        f"back, and says so).</td><td>{html.escape(m.source)}; fitted with the arch library</td><td>close</td></tr>"
        for m in MODEL_REGISTRY.values())
    cautions = "".join(f"<li>{html.escape(c)}</li>" for c in CAUTIONS)
    return f"""
<h2>volbench {__version__}</h2>
<p>A workbench for choosing the volatility that goes into a Black-Scholes-Merton price and
defending it against the price history.</p>
<h3>Cautions</h3><ul>{cautions}</ul>
<h3>How to use it</h3>
<ol>
<li><b>Data</b>: open or drop price CSV files; read the findings; decide whether to leave out
flagged rows (the choice travels with every result and export).</li>
<li>Set the window, annualization (bars per year) and as-of date on the left; pick the
estimators to show.</li>
<li>Enter the proposed pricing vol, days to expiry (in bars) and the option terms; the
comparison table at the bottom shows each candidate vol, its gap to the pricing vol and the
option price at that vol.</li>
<li>Check the <b>Scaling check</b> (does the series scale like Brownian motion, which the
annualization assumes?), the <b>Volatility cone</b> (where the pricing vol sits in history) and
the <b>GARCH models</b> (forward vol over the option's life).</li>
<li>Export the result (File &gt; Export) or save the session to reopen later.</li>
</ol>
<h3>What each estimator assumes</h3>
<table border="1" cellspacing="0" cellpadding="4">
<tr><th>Estimator or model</th><th>Assumes</th><th>Source</th><th>Needs</th></tr>{rows}
</table>
<p>Units: vols are annualized and shown in percent; windows and horizons are in bars (rows of
the file); annualization is bars per year.</p>
"""


class HelpDialog(QDialog):
    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("help_dialog")
        self.setWindowTitle("About volbench")
        self.resize(760, 620)
        lay = QVBoxLayout(self)
        text = QTextBrowser(self)
        text.setObjectName("help_text")
        text.setOpenExternalLinks(False)
        text.setHtml(help_html())
        lay.addWidget(text)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close, parent=self)
        buttons.rejected.connect(self.reject)
        lay.addWidget(buttons)
