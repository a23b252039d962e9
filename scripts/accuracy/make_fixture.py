#!/usr/bin/env python3
"""Build the accuracy reference fixture (test/fixtures/accuracy/reference.json).

Series: R `datasets` (exported by make_fixture.R through Rscript) and
statsmodels.datasets (macrodata, elnino). Each series is cut to its last
10 seasons (monthly 120, quarterly 40 points) or last 100 points when
non-seasonal, then split into train and test: the test part is the last season
(12 monthly, 4 quarterly) or the last 6 points of non-seasonal series.

A second, earlier origin ("previous", for checking that a selection change is not
fitted to the last season alone): the season before the last (the 6 points before
the last 6) is the test part, and every kept point before it the train part; the
same reference forecasts are made on that train part. The fields of the last-season
origin are unchanged by it.

Reference forecasts on the train part:
  - ets: automatic ETS selection by AICc with statsmodels' ETSModel
    (Hyndman, Koehler, Ord and Snyder 2008 state-space models). Candidates:
    error {add, mul} x trend {none, add, add damped} x seasonal {none, add, mul};
    multiplicative error or season only for strictly positive training data,
    seasonal only when m > 1 and the train part has at least 2 full seasons.
    Additive error with multiplicative season is left out (the restricted model
    set of Hyndman et al. 2008, from memory: numerically unstable). A fit with a
    multiplicative part whose fitted values or forecasts are not all positive is
    rejected as inadmissible (such models assume positive states).
    Point forecast = the model's mean forecast; 80% and 95% intervals from
    get_prediction(...).summary_frame(alpha): analytical ("exact") for the
    linear models ANN, AAN, AAdN, ANA, AAA, AAdA, simulated (5,000 sample
    paths, fixed seed) for the others, as statsmodels 0.13.5 decides.
  - seasonalNaive: last observed season repeated (naive for m = 1).

Usage (from the repository root):
    /usr/bin/python3 scripts/accuracy/make_fixture.py [out.json] [--keep-last]

--keep-last: read the existing out.json and keep its last-season fields (train,
test, ets, seasonalNaive, ...) as they are, computing only the "previous" origin.
statsmodels' optimiser does not give bit-identical fits on every machine (a
regeneration here moved some candidates' AICc and changed the chosen model of a few
series), so adding the earlier origin this way leaves the published last-season
reference numbers unchanged. The train and test values are checked to match.
Needs Rscript (r-base-core) and python3-statsmodels 0.13.5 (Debian).
"""
import json
import math
import os
import subprocess
import sys
import tempfile
import warnings

import numpy as np
import pandas as pd
import scipy
import statsmodels
import statsmodels.api as sm
from statsmodels.tsa.exponential_smoothing.ets import ETSModel

HERE = os.path.dirname(os.path.abspath(__file__))
DEFAULT_OUT = os.path.join("test", "fixtures", "accuracy", "reference.json")
SEASON = {"month": 12, "quarter": 4, "year": 1}
KEEP_SEASONS = 10
KEEP_NONSEASONAL = 100
NONSEASONAL_TEST = 6
SIM_REPETITIONS = 5000
SEED = 20261201
PREVIOUS_NOTE = ("series[].previous: the season before the last as test part (the 6 points "
                 "before the last 6 when non-seasonal), every kept point before it as train part, "
                 "same reference forecasts")


def r_series():
    with tempfile.TemporaryDirectory() as tmp:
        out = os.path.join(tmp, "r.json")
        subprocess.run(["Rscript", os.path.join(HERE, "make_fixture.R"), out], check=True)
        with open(out) as f:
            data = json.load(f)
    return data["rVersion"], data["series"]


def statsmodels_series():
    macro = sm.datasets.macrodata.load_pandas().data
    first = f"{int(macro['year'].iloc[0])}-Q{int(macro['quarter'].iloc[0])}"
    src = "statsmodels.datasets.macrodata column {}; FRED, Federal Reserve Bank of St. Louis{}"
    out = []
    for col, note in [
        ("realgdp", " (real GDP, seasonally adjusted)"),
        ("realcons", " (real personal consumption, seasonally adjusted)"),
        ("cpi", " (consumer price index)"),
        ("m1", " (M1 money stock)"),
    ]:
        out.append({
            "name": f"macrodata.{col}", "frequency": "quarter", "interval": "quarter",
            "rFrequency": 4, "start": first, "source": src.format(col, note),
            "values": [float(v) for v in macro[col]],
        })
    nino = sm.datasets.elnino.load_pandas().data
    months = ["JAN", "FEB", "MAR", "APR", "MAY", "JUN", "JUL", "AUG", "SEP", "OCT", "NOV", "DEC"]
    values = [float(v) for _, row in nino.iterrows() for v in row[months]]
    out.append({
        "name": "elnino", "frequency": "month", "interval": "month", "rFrequency": 12,
        "start": f"{int(nino['YEAR'].iloc[0])}-01",
        "source": "statsmodels.datasets.elnino; NOAA NWS ERSST.V3B Nino 1+2 sea surface temperature",
        "values": values,
    })
    return out


def shift_label(start, frequency, steps):
    """Label of the period `steps` after `start` (same formats as the engine)."""
    if frequency == "month":
        y, m = int(start[:4]), int(start[5:7])
        k = y * 12 + (m - 1) + steps
        return f"{k // 12:04d}-{k % 12 + 1:02d}"
    if frequency == "quarter":
        y, q = int(start[:4]), int(start[6])
        k = y * 4 + (q - 1) + steps
        return f"{k // 4:04d}-Q{k % 4 + 1}"
    return f"{int(start) + steps:04d}"


def seasonal_naive(train, m, h):
    n = len(train)
    if m <= 1:
        return [train[-1]] * h
    return [train[n - m + (i % m)] for i in range(h)]


def candidates(train, m):
    positive = min(train) > 0
    seasonal_ok = m > 1 and len(train) >= 2 * m
    for error in ("add", "mul"):
        if error == "mul" and not positive:
            continue
        for trend, damped in ((None, False), ("add", False), ("add", True)):
            for seasonal in (None, "add", "mul"):
                if seasonal is not None and not seasonal_ok:
                    continue
                if seasonal == "mul" and (not positive or error == "add"):
                    continue
                yield error, trend, damped, seasonal


def model_name(error, trend, damped, seasonal):
    t = "N" if trend is None else ("Ad" if damped else "A")
    s = "N" if seasonal is None else seasonal[0].upper()
    return f"ETS({error[0].upper()},{t},{s})"


def auto_ets(train, m, h):
    # A pandas Series: get_prediction in 0.13.5 needs an index on the results.
    y = pd.Series(np.asarray(train, dtype=float))
    best = None
    tried = []
    for error, trend, damped, seasonal in candidates(train, m):
        name = model_name(error, trend, damped, seasonal)
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                model = ETSModel(y, error=error, trend=trend, damped_trend=damped,
                                 seasonal=seasonal, seasonal_periods=m if seasonal else None)
                fit = model.fit(disp=False, maxiter=2000)
            aicc = float(fit.aicc)
            fc = np.asarray(fit.forecast(h), dtype=float)
            if not math.isfinite(aicc) or not np.all(np.isfinite(fc)):
                tried.append({"model": name, "aicc": None, "note": "non-finite"})
                continue
            multiplicative = error == "mul" or seasonal == "mul"
            fitted = np.asarray(fit.fittedvalues, dtype=float)
            if multiplicative and (np.any(fitted <= 0) or np.any(fc <= 0)):
                # Multiplicative models are defined for positive states only; a fit
                # whose fitted values or forecasts turn non-positive is inadmissible.
                tried.append({"model": name, "aicc": round(aicc, 6), "note": "inadmissible: non-positive fitted or forecast"})
                continue
        except Exception as err:  # a failing candidate is skipped, as in auto selection
            tried.append({"model": name, "aicc": None, "note": type(err).__name__})
            continue
        tried.append({"model": name, "aicc": round(aicc, 6)})
        if best is None or aicc < best[0]:
            best = (aicc, name, fit)
    if best is None:
        raise RuntimeError("no ETS candidate could be fitted")
    aicc, name, fit = best
    n = len(train)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        pred = fit.get_prediction(start=n, end=n + h - 1, simulate_repetitions=SIM_REPETITIONS,
                                  random_state=np.random.RandomState(SEED))
        f80 = pred.summary_frame(alpha=0.20)
        f95 = pred.summary_frame(alpha=0.05)
    as_list = lambda col: [float(v) for v in np.asarray(col)]
    return {
        "model": name,
        "aicc": aicc,
        "intervalMethod": pred.method,
        "forecast": as_list(f80["mean"]),
        "lower80": as_list(f80["pi_lower"]),
        "upper80": as_list(f80["pi_upper"]),
        "lower95": as_list(f95["pi_lower"]),
        "upper95": as_list(f95["pi_upper"]),
        "candidates": tried,
    }


def build(entry, kept_last=None):
    freq = entry["frequency"]
    m = SEASON[freq]
    values = entry["values"]
    keep = KEEP_SEASONS * m if m > 1 else KEEP_NONSEASONAL
    dropped = max(0, len(values) - keep)
    kept = values[dropped:]
    test_len = m if m > 1 else NONSEASONAL_TEST
    train, test = kept[:-test_len], kept[-test_len:]
    calendar = entry["interval"] == freq
    start = shift_label(entry["start"], freq, dropped) if calendar else None
    if kept_last is not None:
        if kept_last["train"] != train or kept_last["test"] != test:
            raise RuntimeError(f"{entry['name']}: kept last-season train/test differ from the data")
    ets = kept_last["ets"] if kept_last is not None else auto_ets(train, m, test_len)
    prev_train, prev_test = kept[:-2 * test_len], kept[-2 * test_len:-test_len]
    previous = {
        "train": prev_train,
        "test": prev_test,
        "ets": auto_ets(prev_train, m, test_len),
        "seasonalNaive": seasonal_naive(prev_train, m, test_len),
    }
    if kept_last is not None:
        return {**{k: v for k, v in kept_last.items() if k != "previous"}, "previous": previous}
    return {
        "name": entry["name"],
        "source": entry["source"],
        "frequency": freq,
        "interval": entry["interval"],
        "seasonLength": m,
        "start": start,
        "originalLength": len(values),
        "kept": f"last {len(kept)} of {len(values)} points",
        "train": train,
        "test": test,
        "ets": ets,
        "seasonalNaive": seasonal_naive(train, m, test_len),
        "previous": previous,
    }


def main():
    args = [a for a in sys.argv[1:] if not a.startswith("--")]
    keep_last = "--keep-last" in sys.argv[1:]
    out = args[0] if args else DEFAULT_OUT
    existing = None
    if keep_last:
        with open(out) as f:
            existing = json.load(f)
    r_version, series = r_series()
    series = series + statsmodels_series()
    built = []
    for entry in series:
        kept_last = None
        if existing is not None:
            matches = [s for s in existing["series"] if s["name"] == entry["name"]]
            if len(matches) != 1:
                raise RuntimeError(f"{entry['name']}: not in {out} (run without --keep-last)")
            kept_last = matches[0]
        item = build(entry, kept_last)
        print(f"{item['name']:18s} {item['kept']:24s} {item['ets']['model']:14s} "
              f"{item['ets']['intervalMethod']:10s} previous {item['previous']['ets']['model']}",
              file=sys.stderr)
        built.append(item)
    if existing is not None:
        fixture = {**existing, "series": built}
        fixture["settings"] = {**existing["settings"], "previousOrigin": PREVIOUS_NOTE}
        versions = {"statsmodels": statsmodels.__version__, "numpy": np.__version__,
                    "scipy": scipy.__version__, "python": sys.version.split()[0], "r": r_version}
        if versions != existing["versions"]:
            raise RuntimeError(f"tool versions differ from {out}: {versions}")
        write(out, fixture, built)
        return
    fixture = {
        "description": "Hold-out accuracy reference: real public series with statsmodels "
                       "automatic ETS (AICc) and seasonal naive forecasts of the last season.",
        "generatedBy": "/usr/bin/python3 scripts/accuracy/make_fixture.py",
        "versions": {
            "statsmodels": statsmodels.__version__,
            "numpy": np.__version__,
            "scipy": scipy.__version__,
            "python": sys.version.split()[0],
            "r": r_version,
        },
        "settings": {
            "keepSeasons": KEEP_SEASONS,
            "keepNonSeasonal": KEEP_NONSEASONAL,
            "nonSeasonalTest": NONSEASONAL_TEST,
            "selection": "lowest AICc among ETSModel fits (initialization_method='estimated', maxiter=2000)",
            "simulateRepetitions": SIM_REPETITIONS,
            "seed": SEED,
            "previousOrigin": PREVIOUS_NOTE,
        },
        "series": built,
    }
    write(out, fixture, built)


def write(out, fixture, built):
    os.makedirs(os.path.dirname(out) or ".", exist_ok=True)
    with open(out, "w") as f:
        json.dump(fixture, f, indent=None, separators=(",", ":"), allow_nan=False)
        f.write("\n")
    print(f"wrote {out}: {len(built)} series", file=sys.stderr)


if __name__ == "__main__":
    main()
