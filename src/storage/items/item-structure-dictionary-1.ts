/**
 * The preset DEFLATE dictionary of stored items of format 1 (item-codec.ts):
 * items written from contract 1.0 until format 2 (2026-12-05), whose bytes
 * are a raw DEFLATE stream with no format byte. Frozen: items of format 1
 * still in Redis (within result retention) are read with exactly these
 * bytes. Written by scripts/item-structure-dictionary.ts at the time; never
 * edit or regenerate it.
 */
export const STRUCTURE_DICTIONARY_FORMAT_1: Buffer = Buffer.from(
  [
    "{\"frequency\":\"month\",\"model\":\"moving-average\",\"family\":\"level\",\"params\":{\"window\":,\"level\":},\"modelChoice\":{\"method\":\"holdout\",\"rankBy\":\"mase\",\"holdoutPeriods\":,\"holdoutOrigins\":},\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"candidates\":[{\"model\":\"moving-average\",\"family\":\"level\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"theta\",\"family\":\"trend\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"last-value\",\"family\":\"level\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"trend-smoothing-multiplicative-season\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"last-season\",\"family\":\"seasonal\",\"status\":\"skipped\",\"reason\":\"no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"level-smoothing-season-averages\",\"family\":\"seasonal\",\"status\":\"skipped\",\"reason\":\"no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"linear-trend-season-averages\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"linear-trend-season-ratios\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}],\"forecast\":[{\"period\":\"2026-01\",\"demand\":,\"intervals\":[{\"level\":,\"low\":,\"high\":}",
    ",{\"level\":,\"low\":,\"high\":}]}",
    ",{\"period\":\"2026-02\",\"demand\":,\"intervals\":[{\"level\":,\"low\":,\"high\":}",
    ",{\"level\":,\"low\":,\"high\":}]}],\"intervalMethod\":\"empirical\",\"warnings\":[{\"code\":\"intervals-raised-to-zero\",\"message\":\"some lower interval bounds fell below zero and were raised to zero\"}]}",
    ",{\"level\":,\"low\":,\"high\":}]}],\"intervalMethod\":\"analytical\",\"warnings\":[]}",
    ",{\"frequency\":\"month\",\"model\":\"linear-trend-season-ratios\",\"family\":\"seasonal-trend\",\"params\":{\"slope\":,\"intercept\":,\"seasonFactors\":[,,,,,,,,,,,]},\"modelChoice\":{\"method\":\"holdout\",\"rankBy\":\"mase\",\"holdoutPeriods\":,\"holdoutOrigins\":},\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"candidates\":[{\"model\":\"linear-trend-season-ratios\",\"family\":\"seasonal-trend\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"frequency\":\"month\",\"model\":\"croston-bias-corrected\",\"family\":\"intermittent\",\"params\":{\"levelWeight\":,\"demandSize\":,\"demandInterval\":,\"biasFactor\":},\"modelChoice\":{\"method\":\"holdout\",\"rankBy\":\"mase\",\"holdoutPeriods\":,\"holdoutOrigins\":},\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"candidates\":[{\"model\":\"croston-bias-corrected\",\"family\":\"intermittent\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"level\":,\"low\":,\"high\":}]}],\"intervalMethod\":\"empirical\",\"warnings\":[{\"code\":\"leading-zeros-trimmed\",\"message\":\"2 zero period(s) before the first non-zero period were dropped\"}",
    ",{\"code\":\"intermittent-demand\",\"message\":\"demand is intermittent (ADI 2.90, CV² 0.20); candidates limited to the intermittent-demand methods (croston, croston-bias-corrected)\"}",
    ",{\"frequency\":\"month\",\"model\":\"damped-trend-smoothing\",\"family\":\"trend\",\"params\":{\"levelWeight\":,\"startLevel\":,\"trendWeight\":,\"startTrend\":,\"damping\":},\"modelChoice\":{\"method\":\"holdout\",\"rankBy\":\"mase\",\"holdoutPeriods\":,\"holdoutOrigins\":},\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"candidates\":[{\"model\":\"damped-trend-smoothing\",\"family\":\"trend\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"trend-smoothing-additive-season\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"no significant seasonality at lag 52 (Kruskal-Wallis test at the 10% level)\"}",
    ",{\"frequency\":\"quarter\",\"model\":\"linear-trend\",\"family\":\"trend\",\"params\":{\"slope\":,\"intercept\":,\"residualVariance\":},\"modelChoice\":{\"method\":\"holdout\",\"rankBy\":\"mase\",\"holdoutPeriods\":,\"holdoutOrigins\":},\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"candidates\":[{\"model\":\"linear-trend\",\"family\":\"trend\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"damped-trend-smoothing-additive-season\",\"family\":\"seasonal-trend\",\"status\":\"scored\",\"holdoutErrors\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}],\"forecast\":[{\"period\":\"2035-Q1\",\"demand\":,\"intervals\":[{\"level\":,\"low\":,\"high\":}",
  ].join(''),
  'utf8',
)
