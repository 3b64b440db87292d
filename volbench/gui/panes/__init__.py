"""The window's panes, in display order: one registration line each (see :mod:`volbench.gui.panes.base`)."""

from volbench.gui.panes.base import Pane
from volbench.gui.panes.comparison_pane import ComparisonPane
from volbench.gui.panes.cone_pane import ConePane
from volbench.gui.panes.controls import ControlsPane
from volbench.gui.panes.data_pane import DataPane
from volbench.gui.panes.events_pane import EventsPane
from volbench.gui.panes.hindsight_pane import HindsightPane
from volbench.gui.panes.intraday_pane import IntradayPane
from volbench.gui.panes.life_pane import LifePane
from volbench.gui.panes.market_pane import MarketPane
from volbench.gui.panes.model_pane import ModelPane
from volbench.gui.panes.price_pane import PricePane
from volbench.gui.panes.promise_pane import PromisePane
from volbench.gui.panes.rolling_pane import RollingPane
from volbench.gui.panes.scaling_pane import ScalingPane
from volbench.gui.panes.survey_pane import SurveyPane

PANES: list[type[Pane]] = [
    DataPane,
    PricePane,
    RollingPane,
    ScalingPane,
    IntradayPane,
    ConePane,
    ModelPane,
    MarketPane,
    PromisePane,
    EventsPane,
    HindsightPane,
    ControlsPane,
    LifePane,
    ComparisonPane,
    SurveyPane,
]
"""Every pane class; the window builds them in this order (tabs in this order, docks by place)."""

__all__ = ["PANES", "Pane"]
