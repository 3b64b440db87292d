"""Survey many series at once: the per-series survey, its settings, and the engines that run it.

Core only (no Qt). :func:`run_survey` expands files, folders and patterns, splits them into tasks
of many files and runs :func:`survey_paths` on a local process pool or a Dask cluster;
:func:`survey_history` is the pure per-series function both engines share. Estimates are
statistical, carry model risk and are not advice.
"""

from volbench.survey.engines import (
    ENGINES,
    SCHEDULER_ENV,
    SurveyCancelled,
    SurveyResult,
    plan_tasks,
    resolve_engine,
    run_survey,
)
from volbench.survey.paths import expand_paths
from volbench.survey.record import SurveyRecord
from volbench.survey.series import survey_file, survey_history, survey_paths
from volbench.survey.settings import (
    DEFAULT_DAYS,
    SURVEY_GARCH,
    SurveySettings,
    read_pricing_vols,
    survey_groups,
)

__all__ = [
    "DEFAULT_DAYS",
    "ENGINES",
    "SCHEDULER_ENV",
    "SURVEY_GARCH",
    "SurveyCancelled",
    "SurveyRecord",
    "SurveyResult",
    "SurveySettings",
    "expand_paths",
    "plan_tasks",
    "read_pricing_vols",
    "resolve_engine",
    "run_survey",
    "survey_file",
    "survey_groups",
    "survey_history",
    "survey_paths",
]
