import { z } from 'zod'
import { FailureRecord, jsonOf, StoredValueError } from '../decode.js'
import { MODEL_NAMES, type ModelName } from '../../engine/index.js'
import { RunScope, RunSettings, toRunScope, type RunScope as Scope } from '../../schemas/run.js'
import { RUN_ORIGIN_KINDS, RUN_STATUSES, type Failure, type RunOrigin, type RunRecord, type RunSummary } from '../../runs/contract.js'

/** Conversions between stored strings and the contract types. */

/** Fields of the run hash written at submit time. */
export function newRunFields(run: {
  id: string
  tenant: string
  createdAt: string
  total: number
  chunks: number
  settings: RunSettings
  scope: Scope | null
  origin: RunOrigin
}): Record<string, string> {
  return {
    id: run.id,
    tenant: run.tenant,
    status: 'queued',
    total: String(run.total),
    done: '0',
    failed: '0',
    chunks: String(run.chunks),
    chunksRemaining: String(run.chunks),
    createdAt: run.createdAt,
    settings: JSON.stringify(run.settings),
    ...(run.scope === null ? {} : { scope: JSON.stringify(run.scope) }),
    origin: encodeOrigin(run.origin),
    errSum: '0',
    errCount: '0',
  }
}

const Count = z.coerce.number().int().min(0)

/** The stored `origin` field: `{ kind }`, plus `scheduleId` exactly for a schedule's run. */
const OriginRecord = z
  .strictObject({ kind: z.enum(RUN_ORIGIN_KINDS), scheduleId: z.string().min(1).max(64).optional() })
  .refine((o) => (o.kind === 'schedule') === (o.scheduleId !== undefined), 'scheduleId is set exactly for a schedule')

/** The `origin` field of a run hash. */
export function encodeOrigin(origin: RunOrigin): string {
  return JSON.stringify(origin.kind === 'schedule' ? { kind: origin.kind, scheduleId: origin.scheduleId } : { kind: origin.kind })
}

/** The run hash as stored (HGETALL): every value is a string; per-model counts are `win:<model>` fields. */
const RunHash = z
  .object({
    id: z.string().min(1),
    tenant: z.string().min(1),
    status: z.enum(RUN_STATUSES),
    total: Count,
    done: Count,
    failed: Count,
    createdAt: z.string().min(1),
    startedAt: z.string().optional(),
    finishedAt: z.string().optional(),
    settings: jsonOf(RunSettings),
    scope: jsonOf(RunScope).optional(),
    // Absent on runs stored before runs recorded their origin (an upgrade): read below from their scope.
    origin: jsonOf(OriginRecord).optional(),
    failure: jsonOf(FailureRecord).optional(),
    errSum: z.coerce.number(),
    errCount: Count,
  })
  .catchall(z.string())

/**
 * Run hash (HGETALL) to RunRecord; null for an empty hash (no such run).
 * @throws Error naming the run when a stored field does not decode (the hash is input, not trusted)
 */
export function decodeRunRecord(hash: Record<string, string>): RunRecord | null {
  if (Object.keys(hash).length === 0) return null
  const parsed = RunHash.safeParse(hash)
  if (!parsed.success) throw new StoredValueError(`run record ${hash.id ?? '(no id)'} does not decode: ${parsed.error.issues.map((i) => `${i.path.join('.')} ${i.message}`).join('; ')}`)
  const h = parsed.data
  return {
    id: h.id,
    tenant: h.tenant,
    status: h.status,
    progress: { total: h.total, done: h.done, failed: h.failed },
    createdAt: h.createdAt,
    startedAt: h.startedAt ?? null,
    finishedAt: h.finishedAt ?? null,
    settings: h.settings,
    scope: h.scope === undefined ? null : toRunScope(h.scope),
    origin:
      h.origin === undefined
        ? { kind: h.scope === undefined ? 'inline' : 'scope' }
        : h.origin.scheduleId === undefined
          ? { kind: h.origin.kind }
          : { kind: h.origin.kind, scheduleId: h.origin.scheduleId },
    summary: h.status === 'succeeded' ? decodeSummary(hash, h.settings, h.errSum, h.errCount) : null,
    failure: h.failure ?? null,
  }
}

/** Encoded `failure` field of a run that ended badly. */
export function encodeFailure(failure: Failure): string {
  return JSON.stringify({ code: failure.code, message: failure.message })
}

const isModel = (s: string): s is ModelName => (MODEL_NAMES as readonly string[]).includes(s)

function decodeSummary(hash: Record<string, string>, settings: RunSettings, errSum: number, errCount: number): RunSummary {
  const modelWins: Partial<Record<ModelName, number>> = {}
  for (const [field, value] of Object.entries(hash)) {
    const model = field.startsWith('win:') ? field.slice(4) : ''
    const count = Number(value)
    if (isModel(model) && Number.isInteger(count) && count >= 0) modelWins[model] = count
  }
  return {
    rankBy: settings.rankBy,
    modelCounts: modelWins,
    meanHoldoutError: errCount > 0 && Number.isFinite(errSum) ? errSum / errCount : null,
  }
}
