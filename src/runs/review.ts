/**
 * A planner's review of a SKU on the accuracy exception list or the worklist:
 * acknowledged (seen, stays listed with the note) or snoozed (hidden until a
 * newer forecast of the SKU).
 */
export const REVIEW_STATES = ['acknowledged', 'snoozed'] as const
export type ReviewState = (typeof REVIEW_STATES)[number]

export interface Review {
  readonly state: ReviewState
  readonly note: string
  /** When it was made (ISO time). */
  readonly at: string
  /** The run it was made on: a snooze (and a worklist review) ends with a newer one. */
  readonly runId: string | null
}
