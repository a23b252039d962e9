/**
 * Preset DEFLATE dictionary of stored result items (item-codec.ts): the
 * structure of served items (keys, model ids, statuses, reasons, warnings)
 * without their numbers, 4765 bytes, written by
 * scripts/item-structure-dictionary.ts. Items in Redis can only be read with
 * the bytes they were written with: regenerate it with the script (never edit
 * it) when the served structure changes, knowing that items stored before
 * become unreadable. Mean stored item of the script's check set:
 * 638 B with it, 1087 B without a dictionary.
 */
export const STRUCTURE_DICTIONARY: Buffer = Buffer.from(
  [
    "{\"model\":\"moving-average\",\"family\":\"level\",\"params\":{\"window\":,\"level\":},\"selection\":{\"method\":\"holdout\",\"metric\":\"mase\",\"holdout\":,\"origins\":},\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"leaderboard\":[{\"model\":\"moving-average\",\"family\":\"level\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"ses\",\"family\":\"level\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"naive\",\"family\":\"level\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"holt-winters-additive\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"holt-winters-additive: no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"seasonal-index\",\"family\":\"seasonal\",\"status\":\"skipped\",\"reason\":\"seasonal-index: no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"decomposition\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"decomposition: no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"decomposition-cma\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"decomposition-cma: no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}],\"forecast\":[{\"period\":\"2026-01\",\"value\":,\"lower\":{\"80\":,\"95\":},\"upper\":{\"80\":,\"95\":}}",
    ",{\"period\":\"2026-12\",\"value\":,\"lower\":{\"80\":,\"95\":},\"upper\":{\"80\":,\"95\":}}],\"intervals\":{\"method\":\"empirical\",\"levels\":[80,95],\"clamped\":true},\"warnings\":[{\"code\":\"intervals-clamped\",\"message\":\"some lower interval bounds fell below zero and were raised to zero\"}]}",
    ",{\"model\":\"linear-trend\",\"family\":\"trend\",\"params\":{\"slope\":,\"intercept\":,\"residualVariance\":},\"selection\":{\"method\":\"holdout\",\"metric\":\"mase\",\"holdout\":,\"origins\":},\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"leaderboard\":[{\"model\":\"linear-trend\",\"family\":\"trend\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"period\":\"2026-12\",\"value\":,\"lower\":{\"80\":,\"95\":},\"upper\":{\"80\":,\"95\":}}],\"intervals\":{\"method\":\"analytical\",\"levels\":[80,95],\"clamped\":false},\"warnings\":[]}",
    ",{\"model\":\"sba\",\"family\":\"intermittent\",\"params\":{\"alpha\":,\"size\":,\"interval\":,\"biasFactor\":},\"selection\":{\"method\":\"holdout\",\"metric\":\"mase\",\"holdout\":,\"origins\":},\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"leaderboard\":[{\"model\":\"sba\",\"family\":\"intermittent\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"period\":\"2026-12\",\"value\":,\"lower\":{\"80\":,\"95\":},\"upper\":{\"80\":,\"95\":}}],\"intervals\":{\"method\":\"empirical\",\"levels\":[80,95],\"clamped\":true},\"warnings\":[{\"code\":\"leading-zeros-trimmed\",\"message\":\"2 zero period(s) before the first non-zero period were dropped\"}",
    ",{\"code\":\"intermittent-demand\",\"message\":\"demand is intermittent (ADI 2.90, CV² 0.20); candidates limited to the intermittent-demand methods (croston, sba)\"}",
    ",{\"model\":\"seasonal-smoothing-additive\",\"family\":\"seasonal\",\"params\":{\"alpha\":,\"initialLevel\":,\"gamma\":,\"initialSeasonal\":[7.82,13,7.8,7.56,0.01999981,-6.92,-8.48,-9.6,-9.44,-4.06,-1.22,3.52]},\"selection\":{\"method\":\"holdout\",\"metric\":\"mase\",\"holdout\":,\"origins\":},\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"leaderboard\":[{\"model\":\"seasonal-smoothing-additive\",\"family\":\"seasonal\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"damped-holt\",\"family\":\"trend\",\"params\":{\"alpha\":,\"initialLevel\":,\"beta\":,\"initialTrend\":,\"phi\":},\"selection\":{\"method\":\"holdout\",\"metric\":\"mase\",\"holdout\":,\"origins\":},\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"leaderboard\":[{\"model\":\"damped-holt\",\"family\":\"trend\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"holt-winters-multiplicative-damped\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"holt-winters-multiplicative-damped: no significant seasonality at lag 52 (Kruskal-Wallis test at the 10% level)\"}",
    ",{\"model\":\"seasonal-smoothing-additive\",\"family\":\"seasonal\",\"status\":\"skipped\",\"reason\":\"seasonal-smoothing-additive: no significant seasonality at lag 52 (Kruskal-Wallis test at the 10% level)\"}",
    ",{\"model\":\"theta\",\"family\":\"trend\",\"params\":{\"alpha\":,\"slope\":,\"drift\":,\"level\":},\"selection\":{\"method\":\"holdout\",\"metric\":\"mase\",\"holdout\":,\"origins\":},\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"leaderboard\":[{\"model\":\"theta\",\"family\":\"trend\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"seasonal-naive\",\"family\":\"seasonal\",\"status\":\"skipped\",\"reason\":\"seasonal-naive: no significant seasonality at lag 4 (autocorrelation test at the 10% level)\"}",
  ].join(''),
  'utf8',
)
