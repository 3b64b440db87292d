"""Intraday bars: sessions and daily bars, realized measures, the signature plot, the continuity
check (jumps) and HAR forecasts.

Pure functions and frozen results over numpy and pandas; methods and sources in docs/METHODS.md,
"Intraday data, realized measures and jumps".
"""

from volbench.intraday.estimates import REALIZED_KEYS, realized_point_estimate, realized_rolling
from volbench.intraday.har import HarForecast, har_forecast
from volbench.intraday.jumps import ContinuityCheck, continuity_check, lee_mykland_screen
from volbench.intraday.measures import RealizedMeasures, realized_measures
from volbench.intraday.report import RealizedReport, realized_report
from volbench.intraday.sessions import (
    SessionLayout,
    daily_bars,
    infer_layout,
    parse_session_break,
)
from volbench.intraday.signature import SignaturePlot, signature_plot

__all__ = [
    "REALIZED_KEYS",
    "ContinuityCheck",
    "HarForecast",
    "RealizedMeasures",
    "RealizedReport",
    "SessionLayout",
    "SignaturePlot",
    "continuity_check",
    "daily_bars",
    "har_forecast",
    "infer_layout",
    "lee_mykland_screen",
    "parse_session_break",
    "realized_measures",
    "realized_point_estimate",
    "realized_report",
    "realized_rolling",
    "signature_plot",
]
