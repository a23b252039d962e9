import { describe, expect, it } from 'vitest'
import { checkTiming, isTimeZone, nextFiring } from '../../src/schedules/cron.js'

const NOW = new Date('2026-01-05T12:00:00Z')

describe('schedule timing checks', () => {
  it('accepts IANA zones and refuses made-up ones', () => {
    expect(isTimeZone('Europe/Berlin')).toBe(true)
    expect(isTimeZone('UTC')).toBe(true)
    expect(isTimeZone('Mars/Olympus_Mons')).toBe(false)
    expect(checkTiming('0 2 * * *', 'Mars/Olympus_Mons', 300, NOW)).toEqual([
      { path: 'timeZone', message: 'must be an IANA time zone such as Europe/Berlin or UTC' },
    ])
  })

  it('refuses patterns with the wrong number of fields or bad values', () => {
    expect(checkTiming('0 2 * *', 'UTC', 300, NOW)[0]?.path).toBe('cron')
    expect(checkTiming('0 2 * * * * *', 'UTC', 300, NOW)[0]?.path).toBe('cron')
    const bad = checkTiming('0 25 * * *', 'UTC', 300, NOW)
    expect(bad).toHaveLength(1)
    expect(bad[0]!.message).toMatch(/^is not a valid cron pattern/)
  })

  it('refuses patterns firing more often than the minimum interval', () => {
    expect(checkTiming('*/1 * * * *', 'UTC', 300, NOW)).toEqual([{ path: 'cron', message: 'fires more often than every 300 seconds' }])
    expect(checkTiming('*/5 * * * *', 'UTC', 300, NOW)).toEqual([])
    expect(checkTiming('* * * * * *', 'UTC', 1, NOW)).toEqual([])
  })

  // Central European Time is UTC+1 in winter and UTC+2 in summer (IANA tz database, Europe/Berlin).
  it('reads the pattern in the schedule time zone, daylight saving included', () => {
    expect(nextFiring('0 2 * * *', 'Europe/Berlin', NOW)).toBe('2026-01-06T01:00:00.000Z')
    expect(nextFiring('0 2 * * *', 'Europe/Berlin', new Date('2026-07-01T12:00:00Z'))).toBe('2026-07-02T00:00:00.000Z')
    expect(nextFiring('30 1 * * 1-5', 'UTC', NOW)).toBe('2026-01-06T01:30:00.000Z')
  })
})
