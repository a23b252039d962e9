/**
 * Preset DEFLATE dictionary of stored result items in format 0x03
 * (item-codec.ts): the structure of served items (keys, model names,
 * statuses, reasons, warnings) without their numbers, 4463 bytes, written by
 * scripts/item-structure-dictionary.ts from the 0x02 dictionary. Frozen: items
 * in Redis can only be read with these exact bytes, so never edit or
 * regenerate it; a new dictionary needs a new format byte. Mean stored item of
 * the script's check set (level 5): 643 B with it, 658 B with the
 * 0x02 dictionary (11921 bytes).
 */
export const STRUCTURE_DICTIONARY: Buffer = Buffer.from(
  [
    "{\"model\":\"linear-trend\",\"family\":\"trend\",\"params\":{\"slope\":,\"intercept\":,\"residualVariance\":},\"selection\":{\"method\":\"holdout\",\"metric\":\"mase\",\"holdout\":,\"origins\":},\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"leaderboard\":[{\"model\":\"linear-trend\",\"family\":\"trend\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"holt-winters-additive-damped\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"holt-winters-additive-damped: no significant seasonality at lag 52 (Kruskal-Wallis test at the 10% level)\"}",
    ",{\"model\":\"holt-winters-multiplicative-damped\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"holt-winters-multiplicative-damped: no significant seasonality at lag 52 (Kruskal-Wallis test at the 10% level)\"}",
    ",{\"period\":\"2020-W20\",\"value\":,\"lower\":{\"80\":,\"95\":},\"upper\":{\"80\":,\"95\":}}],\"intervals\":{\"method\":\"analytical\",\"levels\":[80,95],\"clamped\":false},\"warnings\":[]}{\"model\":\"sba\",\"family\":\"intermittent\",\"params\":{\"alpha\":,\"size\":,\"interval\":,\"biasFactor\":},\"selection\":{\"method\":\"holdout\",\"metric\":\"mase\",\"holdout\":,\"origins\":},\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"leaderboard\":[{\"model\":\"sba\",\"family\":\"intermittent\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"period\":\"2024-12\",\"value\":,\"lower\":{\"80\":,\"95\":},\"upper\":{\"80\":,\"95\":}}],\"intervals\":{\"method\":\"empirical\",\"levels\":[80,95],\"clamped\":true},\"warnings\":[{\"code\":\"leading-zeros-trimmed\",\"message\":\"2 zero period(s) before the first non-zero period were dropped\"}",
    ",{\"code\":\"intermittent-demand\",\"message\":\"demand is intermittent (ADI 2.90, CV² 0.20); candidates limited to the intermittent-demand methods (croston, sba)\"}",
    ",{\"code\":\"intervals-clamped\",\"message\":\"some lower interval bounds fell below zero and were raised to zero\"}]}{\"model\":\"moving-average\",\"family\":\"level\",\"params\":{\"window\":,\"level\":},\"selection\":{\"method\":\"holdout\",\"metric\":\"mase\",\"holdout\":,\"origins\":},\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"leaderboard\":[{\"model\":\"moving-average\",\"family\":\"level\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"ses\",\"family\":\"level\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"damped-holt\",\"family\":\"trend\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"theta\",\"family\":\"trend\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"linear-trend\",\"family\":\"trend\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"naive\",\"family\":\"level\",\"status\":\"scored\",\"metrics\":{\"mae\":,\"rmse\":,\"mape\":,\"smape\":,\"mase\":,\"wape\":},\"score\":}",
    ",{\"model\":\"holt-winters-additive\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"holt-winters-additive: no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"holt-winters-multiplicative\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"holt-winters-multiplicative: no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"seasonal-smoothing-additive\",\"family\":\"seasonal\",\"status\":\"skipped\",\"reason\":\"seasonal-smoothing-additive: no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"seasonal-smoothing-multiplicative\",\"family\":\"seasonal\",\"status\":\"skipped\",\"reason\":\"seasonal-smoothing-multiplicative: no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"seasonal-naive\",\"family\":\"seasonal\",\"status\":\"skipped\",\"reason\":\"seasonal-naive: no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"seasonal-index\",\"family\":\"seasonal\",\"status\":\"skipped\",\"reason\":\"seasonal-index: no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"decomposition\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"decomposition: no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}",
    ",{\"model\":\"decomposition-cma\",\"family\":\"seasonal-trend\",\"status\":\"skipped\",\"reason\":\"decomposition-cma: no significant seasonality at lag 12 (autocorrelation test at the 10% level)\"}],\"forecast\":[{\"period\":\"2024-01\",\"value\":,\"lower\":{\"80\":,\"95\":},\"upper\":{\"80\":,\"95\":}}",
    ",{\"period\":\"2024-02\",\"value\":,\"lower\":{\"80\":,\"95\":},\"upper\":{\"80\":,\"95\":}}",
  ].join(''),
  'utf8',
)
