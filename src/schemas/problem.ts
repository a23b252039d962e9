import { z } from 'zod'
import { PROBLEM_BASE_URI } from '../errors.js'

/** RFC 9457 problem details, as every error response of the API carries them. */
export const FieldErrorSchema = z.object({
  path: z.string().describe('Offending field, e.g. series[3].demand[2]'),
  message: z.string(),
})

export const Problem = z
  .object({
    type: z.string().describe(`Problem type URI under ${PROBLEM_BASE_URI}`),
    title: z.string(),
    status: z.number().int().min(400).max(599),
    detail: z.string().optional(),
    errors: z.array(FieldErrorSchema).optional().describe('One entry per invalid field'),
  })
  .meta({ id: 'Problem' })
export type Problem = z.infer<typeof Problem>
