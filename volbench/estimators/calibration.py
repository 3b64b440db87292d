"""Constants measured by ``python -m volbench.estimators.calibrate`` (seeded simulation; do not edit by hand).

Per-bar moments of driftless Brownian motion with unit session variance, from exactly simulated
highs and lows, and the vol bias of each range estimator on discretely traded prices:
vol reads about -c / sqrt(M) low with M trades a bar (c measured at M = 500).
"""

GARMAN_KLASS_BAR_VARIANCE = 0.2690
ROGERS_SATCHELL_BAR_VARIANCE = 0.3311
SESSION_SQUARE_RS_COVARIANCE = 0.0001
DISCRETE_BIAS = {'parkinson': 0.67, 'garman_klass': 0.94, 'rogers_satchell': 0.94, 'yang_zhang': 0.8}
SEED = 20261202
BARS = 4000000
