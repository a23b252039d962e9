import { checkReplenishmentOptions, EngineInputError, type Frequency, type ReplenishmentOptions } from '../engine/index.js'
import type { StockPolicy } from '../schemas/run.js'
import { PERIOD_SETTING_CONVERTED } from './failures.js'

/**
 * Calendar rule for durations given in days: a period of each frequency lasts,
 * on average, day 1, week 7, month 365.25 / 12 = 30.4375, quarter 91.3125 and
 * year 365.25 days (the mean Julian year; common practice). A duration becomes
 * days / daysPerPeriod periods, kept fractional: a 10-day lead time for a
 * monthly SKU is 0.3285 of a month, not a whole month.
 */
export const DAYS_PER_PERIOD: Readonly<Record<Frequency, number>> = {
  day: 1,
  week: 7,
  month: 365.25 / 12,
  quarter: 365.25 / 4,
  year: 365.25,
}

export interface ItemWarning {
  readonly code: string
  readonly message: string
}

const DURATIONS = [
  { name: 'leadTime', days: 'leadTimeDays', periods: 'leadTimePeriods' },
  { name: 'leadTimeSd', days: 'leadTimeSdDays', periods: 'leadTimeSdPeriods' },
  { name: 'review', days: 'reviewDays', periods: 'reviewPeriods' },
] as const

/**
 * One SKU's replenishment options, in periods of its own frequency: the SKU's
 * policy wins field by field (a duration in days or periods replaces the run's
 * duration in either unit); the rest comes from the run. A run-level duration
 * in periods counts periods of the run's `frequency`: for a SKU of another
 * frequency it is converted through days (a warning per item says so).
 * @returns the options and warnings, or why the SKU gets no figures
 */
export function resolveStockPolicy(
  run: StockPolicy | undefined,
  sku: StockPolicy | undefined,
  runFrequency: Frequency,
  frequency: Frequency,
): { options: ReplenishmentOptions; warnings: ItemWarning[] } | { reason: string } {
  const warnings: ItemWarning[] = []
  const periods: Partial<Record<(typeof DURATIONS)[number]['name'], number>> = {}
  for (const d of DURATIONS) {
    const own = sku?.[d.days] !== undefined || sku?.[d.periods] !== undefined ? sku : undefined
    const source = own ?? run
    const days = source?.[d.days]
    const count = source?.[d.periods]
    if (days !== undefined) periods[d.name] = days / DAYS_PER_PERIOD[frequency]
    else if (count !== undefined) {
      if (own === undefined && runFrequency !== frequency) {
        const converted = (count * DAYS_PER_PERIOD[runFrequency]) / DAYS_PER_PERIOD[frequency]
        periods[d.name] = converted
        warnings.push({
          code: PERIOD_SETTING_CONVERTED,
          message: `replenishment.${d.periods} ${count} counts ${runFrequency} periods (the run's frequency); for this ${frequency} SKU it is ${round4(converted)} ${frequency} periods (calendar rule: ${round4(DAYS_PER_PERIOD[runFrequency])} days per ${runFrequency})`,
        })
      } else periods[d.name] = count
    }
  }
  const serviceLevel = sku?.serviceLevel ?? run?.serviceLevel
  if (periods.leadTime === undefined) return { reason: 'no lead time for this SKU: give leadTimeDays or leadTimePeriods in its policy or the run' }
  if (serviceLevel === undefined) return { reason: 'no service level for this SKU: give serviceLevel in its policy or the run' }
  const minimumOrder = sku?.minimumOrder ?? run?.minimumOrder
  const packSize = sku?.packSize ?? run?.packSize
  const options: ReplenishmentOptions = {
    leadTimePeriods: periods.leadTime,
    serviceLevel,
    ...(periods.review === undefined ? {} : { reviewPeriods: periods.review }),
    ...(periods.leadTimeSd === undefined ? {} : { leadTimeSdPeriods: periods.leadTimeSd }),
    ...(minimumOrder === undefined ? {} : { minimumOrder }),
    ...(packSize === undefined ? {} : { packSize }),
  }
  return { options, warnings }
}

/**
 * The run-level checks a request can fail before anything is queued: a lead
 * time plus review period (in the run's frequency) beyond the horizon.
 * @throws EngineInputError naming the field
 */
export function checkRunStockPolicy(run: StockPolicy, runFrequency: Frequency, horizon: number): void {
  // The schema checks the service level's range; a missing one may come from the SKUs' policies.
  const resolved = resolveStockPolicy({ serviceLevel: 0.9, ...run }, undefined, runFrequency, runFrequency)
  if ('reason' in resolved) return // no lead time: the SKUs' own policies may give it
  try {
    checkReplenishmentOptions(resolved.options, horizon)
  } catch (err) {
    if (!(err instanceof EngineInputError) || run.leadTimePeriods !== undefined || err.field !== 'replenishment.leadTimePeriods') throw err
    throw new EngineInputError(err.code, err.message, 'replenishment.leadTimeDays')
  }
}

function round4(x: number): number {
  return Number(x.toFixed(4))
}
