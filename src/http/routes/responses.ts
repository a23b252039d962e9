import { Problem } from '../../schemas/problem.js'

/** Problem responses every authenticated v1 route may give. */
export const COMMON_PROBLEMS = { 400: Problem, 401: Problem, 429: Problem } as const
export const NOT_FOUND = { 404: Problem } as const
export const BODY_PROBLEMS = { 413: Problem, 415: Problem } as const
