/**
 * Preset DEFLATE dictionary of stored result items (item-codec.ts): the
 * structure of served items (keys, model ids, statuses, reasons, warnings)
 * without their numbers, written by scripts/item-structure-dictionary.ts
 * (its size and what it saves: bench/RESULTS.md, "Stored result items").
 * Items in Redis can only be read with the bytes they were written with:
 * regenerate it with the script (never edit it) when the served structure
 * changes, knowing that items stored before become unreadable.
 */
export const STRUCTURE_DICTIONARY: Buffer = Buffer.from(
  [
    "{\"frequency\":\"month\",\"model\":\"moving-average\",\"family\":\"level\",\"params\":{\"window\":,\"level\":},\"modelChoice\":{\"method\":\"holdout\",\"rankBy\":\"mase\",\"holdoutPeriods\":,\"holdoutOrigins\":},\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":,\"msis\":,\"pinball\":},\"candidates\":[{\"model\":\"moving-average\",\"family\":\"level\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":,\"msis\":,\"pinball\":},\"score\":}",
    ",{\"model\":\"theta\",\"family\":\"trend\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"trend-smoothing-multiplicative-season\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"no sign of seasonality at lag 12 (autocorrelation and Kruskal-Wallis tests on the detrended history)\"}",
    ",{\"model\":\"damped-trend-smoothing-additive-season\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"no sign of seasonality at lag 12 (autocorrelation and Kruskal-Wallis tests on the detrended history)\"}",
    ",{\"model\":\"last-season\",\"family\":\"seasonal\",\"status\":\"skipped\",\"reason\":\"no sign of seasonality at lag 12 (autocorrelation and Kruskal-Wallis tests on the detrended history)\"}",
    ",{\"model\":\"linear-trend-season-averages\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"no sign of seasonality at lag 12 (autocorrelation and Kruskal-Wallis tests on the detrended history)\"}",
    ",{\"model\":\"linear-trend-season-ratios\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"no sign of seasonality at lag 12 (autocorrelation and Kruskal-Wallis tests on the detrended history)\"}],\"forecast\":[{\"period\":\"2026-01\",\"demand\":,\"intervals\":[{\"level\":,\"low\":,\"high\":}",
    ",{\"level\":,\"low\":,\"high\":}]}",
    ",{\"period\":\"2026-02\",\"demand\":,\"intervals\":[{\"level\":,\"low\":,\"high\":}",
    ",{\"level\":,\"low\":,\"high\":}]}],\"intervalMethod\":\"calibrated\",\"warnings\":[{\"code\":\"intervals-raised-to-zero\",\"message\":\"some lower interval bounds fell below zero and were raised to zero\"}]}",
    ",{\"frequency\":\"month\",\"model\":\"linear-trend-season-ratios\",\"family\":\"seasonal-trend\",\"params\":{\"slope\":,\"intercept\":,\"seasonFactors\":[,,,,,,,,,,,]},\"modelChoice\":{\"method\":\"holdout\",\"rankBy\":\"mase\",\"holdoutPeriods\":,\"holdoutOrigins\":},\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":,\"msis\":,\"pinball\":},\"candidates\":[{\"model\":\"linear-trend-season-ratios\",\"family\":\"seasonal-trend\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":,\"msis\":,\"pinball\":},\"score\":}",
    ",{\"frequency\":\"month\",\"model\":\"croston-bias-corrected\",\"family\":\"intermittent\",\"params\":{\"levelWeight\":,\"demandSize\":,\"demandInterval\":,\"biasFactor\":},\"modelChoice\":{\"method\":\"holdout\",\"rankBy\":\"mase\",\"holdoutPeriods\":,\"holdoutOrigins\":},\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":,\"msis\":,\"pinball\":},\"candidates\":[{\"model\":\"croston-bias-corrected\",\"family\":\"intermittent\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":,\"msis\":,\"pinball\":},\"score\":}",
    ",{\"level\":,\"low\":,\"high\":}]}],\"intervalMethod\":\"calibrated\",\"warnings\":[{\"code\":\"leading-zeros-trimmed\",\"message\":\"2 zero period(s) before the first non-zero period were dropped\"}",
    ",{\"code\":\"intermittent-demand\",\"message\":\"demand is intermittent (ADI 2.90, CV² 0.20); candidates limited to the intermittent-demand methods (croston, croston-bias-corrected)\"}",
    ",{\"frequency\":\"month\",\"model\":\"shortlist-combination\",\"family\":\"combination\",\"params\":{\"memberCount\":},\"modelChoice\":{\"method\":\"holdout\",\"rankBy\":\"mase\",\"holdoutPeriods\":,\"holdoutOrigins\":,\"members\":[{\"model\":\"linear-trend\",\"family\":\"trend\"}",
    ",{\"frequency\":\"month\",\"model\":\"damped-trend-smoothing\",\"family\":\"trend\",\"params\":{\"levelWeight\":,\"startLevel\":,\"trendWeight\":,\"startTrend\":,\"damping\":},\"modelChoice\":{\"method\":\"holdout\",\"rankBy\":\"mase\",\"holdoutPeriods\":,\"holdoutOrigins\":},\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":,\"msis\":,\"pinball\":},\"candidates\":[{\"model\":\"damped-trend-smoothing\",\"family\":\"trend\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":,\"msis\":,\"pinball\":},\"score\":}",
    ",{\"model\":\"last-value\",\"family\":\"level\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}],\"forecast\":[{\"period\":\"2026-01\",\"demand\":,\"intervals\":[{\"level\":,\"low\":,\"high\":}",
    ",{\"model\":\"level-smoothing-additive-season\",\"family\":\"seasonal\",\"status\":\"skipped\",\"reason\":\"needs 104 periods in the training part, has 48\"}",
    ",{\"model\":\"level-smoothing-season-averages\",\"family\":\"seasonal\",\"status\":\"skipped\",\"reason\":\"needs 104 periods in the training part, has 48\"}",
    ",{\"level\":,\"low\":,\"high\":}]}],\"intervalMethod\":\"calibrated\",\"warnings\":[{\"code\":\"fewer-than-two-seasons\",\"message\":\"seasonal models need two full seasons (104 periods), the history has 60: any seasonality is not modelled\"}]}",
    ",{\"model\":\"trend-smoothing-additive-season\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"no sign of seasonality at lag 4 (autocorrelation and Kruskal-Wallis tests on the detrended history)\"}",
    ",{\"frequency\":\"quarter\",\"model\":\"linear-trend\",\"family\":\"trend\",\"params\":{\"slope\":,\"intercept\":,\"residualVariance\":},\"modelChoice\":{\"method\":\"holdout\",\"rankBy\":\"mase\",\"holdoutPeriods\":,\"holdoutOrigins\":},\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":,\"msis\":,\"pinball\":},\"candidates\":[{\"model\":\"linear-trend\",\"family\":\"trend\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":,\"msis\":,\"pinball\":},\"score\":}",
    ",{\"model\":\"moving-average\",\"family\":\"level\"}]},\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":,\"msis\":,\"pinball\":},\"candidates\":[{\"model\":\"shortlist-combination\",\"family\":\"combination\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":,\"msis\":,\"pinball\":},\"score\":}",
  ].join(''),
  'utf8',
)
