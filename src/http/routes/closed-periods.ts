import { z } from 'zod'
import type { FastifyPluginAsyncZod } from 'fastify-type-provider-zod'
import { FREQUENCIES, parsePeriod } from '../../engine/index.js'
import { ProblemError } from '../../errors.js'
import { closePeriod } from '../../history/close-period.js'
import { PeriodLabel } from '../../schemas/run.js'
import { requireErp } from '../plugins/erp.js'
import { requireHistories } from '../plugins/history.js'
import { READ, WRITE } from './responses.js'
import { ClosingReportSchema } from '../../schemas/closing.js'

const ClosedPeriods = z
  .object({
    closedThrough: z
      .object(Object.fromEntries(FREQUENCIES.map((f) => [f, z.string().optional()])) as Record<(typeof FREQUENCIES)[number], z.ZodOptional<z.ZodString>>)
      .describe('Closed-through period per frequency; a frequency not listed has never been closed (all its periods count as closed)'),
  })
  .meta({ id: 'ClosedPeriods' })

const CloseBody = z
  .strictObject({
    closedThrough: PeriodLabel.describe('The last closed period, e.g. 2026-03 for month: it and every earlier period are complete'),
  })
  .meta({ id: 'ClosePeriod' })


/** /v1/closed-periods: the tenant's closed-through period per frequency. */
const routes: FastifyPluginAsyncZod = async (app) => {
  app.get(
    '',
    {
      schema: {
        tags: ['accuracy'],
        operationId: 'getClosedPeriods',
        'x-problems': READ,
        summary: 'Closed-through period per frequency',
        response: { 200: ClosedPeriods },
      },
    },
    async (request) => ({ closedThrough: await requireErp(app).closing.labels(request.tenant) }),
  )

  app.put(
    '/:frequency',
    {
      schema: {
        tags: ['accuracy'],
        operationId: 'closePeriod',
        'x-problems': [...WRITE, 'period-closed'],
        summary: 'Close periods through the one given',
        description:
          'Marks every period of the frequency up to closedThrough as complete. Stored histories of the frequency that ' +
          'end earlier are carried forward to it with zero demand (nothing sent means no demand), and every history of ' +
          'the frequency is rescored, zeros included. Periods after it stay open: runs leave them out of the fit ' +
          '(openPeriods) and they are never scored. Closing only moves forward (409 period-closed); repeating a call ' +
          'is safe. The call walks every stored history of the tenant, so it takes longer the more there are.',
        params: z.object({ frequency: z.enum(FREQUENCIES) }),
        body: CloseBody,
        response: { 200: ClosingReportSchema },
      },
    },
    async (request) => {
      const { frequency } = request.params
      const { closedThrough } = request.body
      try {
        parsePeriod(closedThrough, frequency)
      } catch (err) {
        const message = `is not a ${frequency} period: ${(err as Error).message}`
        throw new ProblemError('validation-failed', `closedThrough ${message}`, [{ path: 'closedThrough', message }])
      }
      const erp = requireErp(app)
      const histories = requireHistories(app)
      const report = await closePeriod({ histories, closing: erp.closing, accuracy: erp.accuracy }, request.tenant, frequency, closedThrough)
      if (report.outcome === 'behind') {
        throw new ProblemError('period-closed', `${frequency} periods are already closed through ${report.previous}; closing only moves forward`)
      }
      request.log.info({ frequency, closedThrough: report.closedThrough, checked: report.checkedSkus, advanced: report.advancedSkus }, 'periods closed')
      return { ...report, outcome: report.outcome }
    },
  )
}

export default routes
