import { z } from 'zod'

/** Data of a chunk job: ids only. The series sit in the run store under the chunk's input key. */
export const ChunkJob = z.object({
  tenant: z.string().min(1).max(64),
  runId: z.string().min(1).max(64),
  chunkIndex: z.number().int().min(0),
})
export type ChunkJob = z.infer<typeof ChunkJob>
