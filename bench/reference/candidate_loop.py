#!/usr/bin/env python3
"""Reference candidate loop for `npm run bench:reference` (statsmodels 0.13.5).

The same selection our engine runs, written with a general-purpose library:
for each series, fit every candidate on the training part (all but the last
`holdout` points), forecast the holdout, score it by MASE (mean absolute error
over the in-sample mean absolute seasonal difference at lag m of the training
part; Hyndman and Koehler 2006, "Another look at measures of forecast
accuracy"), pick the lowest, refit the winner on the whole series and forecast
`horizon` periods.

Candidates, by Almanac's model id (statsmodels 0.13.5 classes, default settings otherwise):
  level-smoothing                        SimpleExpSmoothing, initialization_method="estimated"
  trend-smoothing                        Holt, initialization_method="estimated"
  damped-trend-smoothing                 Holt(damped_trend=True), initialization_method="estimated"
  trend-smoothing-additive-season        ExponentialSmoothing(trend="add", seasonal="add")
  trend-smoothing-multiplicative-season  ExponentialSmoothing(trend="add", seasonal="mul")
  last-season                            the last season repeated (numpy)
  linear-trend                           OLS of y on (1, t)
  linear-trend-season-ratios             seasonal_decompose(model="multiplicative") figure, OLS line
                                         through the de-seasonalised series, line times figure
Multiplicative candidates are skipped unless every value is positive (as the
engine does). A candidate that raises or gives a non-finite forecast is skipped.

Input: a JSON file {"seasonLength", "holdout", "horizon", "series": [[...], ...]}
(argv[1]). Output on stdout: JSON {"versions", "results": [{"model",
"holdoutForecast", "forecast", "seconds"}]}, `seconds` the wall time of the
whole loop for that series (perf_counter), excluding reading and writing JSON.

Usage: /usr/bin/python3 bench/reference/candidate_loop.py input.json
"""
import json
import sys
import time
import warnings

import numpy as np
import scipy
import statsmodels
import statsmodels.api as sm
from statsmodels.tsa.holtwinters import ExponentialSmoothing, Holt, SimpleExpSmoothing
from statsmodels.tsa.seasonal import seasonal_decompose

CANDIDATES = [
    "level-smoothing",
    "trend-smoothing",
    "damped-trend-smoothing",
    "trend-smoothing-additive-season",
    "trend-smoothing-multiplicative-season",
    "last-season",
    "linear-trend",
    "linear-trend-season-ratios",
]
MULTIPLICATIVE = {"trend-smoothing-multiplicative-season", "linear-trend-season-ratios"}


def linear_line(y):
    t = np.arange(1, len(y) + 1, dtype=float)
    fit = sm.OLS(y, sm.add_constant(t)).fit()
    intercept, slope = fit.params
    return intercept, slope


def fit_forecast(model, y, m, horizon):
    """Fit `model` on y and return `horizon` point forecasts."""
    n = len(y)
    if model == "level-smoothing":
        return SimpleExpSmoothing(y, initialization_method="estimated").fit().forecast(horizon)
    if model == "trend-smoothing":
        return Holt(y, initialization_method="estimated").fit().forecast(horizon)
    if model == "damped-trend-smoothing":
        return Holt(y, damped_trend=True, initialization_method="estimated").fit().forecast(horizon)
    if model in ("trend-smoothing-additive-season", "trend-smoothing-multiplicative-season"):
        seasonal = "add" if model == "trend-smoothing-additive-season" else "mul"
        es = ExponentialSmoothing(
            y, trend="add", seasonal=seasonal, seasonal_periods=m, initialization_method="estimated"
        )
        return es.fit().forecast(horizon)
    if model == "last-season":
        last = y[n - m:]
        return np.array([last[h % m] for h in range(horizon)])
    if model == "linear-trend":
        intercept, slope = linear_line(y)
        return intercept + slope * np.arange(n + 1, n + horizon + 1, dtype=float)
    if model == "linear-trend-season-ratios":
        figure = seasonal_decompose(y, model="multiplicative", period=m).seasonal[:m]
        factors = np.array([figure[t % m] for t in range(n)])
        intercept, slope = linear_line(y / factors)
        steps = np.arange(n + 1, n + horizon + 1, dtype=float)
        return (intercept + slope * steps) * np.array([figure[(n + h) % m] for h in range(horizon)])
    raise ValueError(model)


def mase(actual, forecast, train, m):
    lag = m if m > 1 and len(train) > m else 1
    scale = np.mean(np.abs(train[lag:] - train[:-lag]))
    if not (scale > 0 and np.isfinite(scale)):
        return None
    return float(np.mean(np.abs(actual - forecast)) / scale)


def select_and_forecast(values, m, holdout, horizon):
    y = np.asarray(values, dtype=float)
    train, test = y[:-holdout], y[-holdout:]
    positive = bool(np.all(y > 0))
    best, best_score, best_holdout = None, None, None
    for model in CANDIDATES:
        if model in MULTIPLICATIVE and not positive:
            continue
        try:
            f = np.asarray(fit_forecast(model, train, m, holdout), dtype=float)
        except Exception:  # a candidate that cannot be fitted is skipped, as in the engine
            continue
        if not np.all(np.isfinite(f)):
            continue
        score = mase(test, f, train, m)
        if score is None:
            continue
        if best_score is None or score < best_score:
            best, best_score, best_holdout = model, score, f
    if best is None:
        return None, None, None
    return best, best_holdout, np.asarray(fit_forecast(best, y, m, horizon), dtype=float)


def main():
    with open(sys.argv[1]) as f:
        spec = json.load(f)
    m, holdout, horizon = spec["seasonLength"], spec["holdout"], spec["horizon"]
    warnings.simplefilter("ignore")  # convergence warnings of the optimiser on noisy series
    results = []
    for values in spec["series"]:
        began = time.perf_counter()
        model, holdout_forecast, forecast = select_and_forecast(values, m, holdout, horizon)
        seconds = time.perf_counter() - began
        results.append({
            "model": model,
            "holdoutForecast": None if holdout_forecast is None else holdout_forecast.tolist(),
            "forecast": None if forecast is None else forecast.tolist(),
            "seconds": seconds,
        })
    versions = {
        "python": sys.version.split()[0],
        "statsmodels": statsmodels.__version__,
        "numpy": np.__version__,
        "scipy": scipy.__version__,
    }
    json.dump({"versions": versions, "results": results}, sys.stdout)


if __name__ == "__main__":
    main()
