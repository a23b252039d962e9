import { readlinkSync } from 'node:fs'
import { setPriority } from 'node:os'

/**
 * Niceness of the sandbox threads that fit chunks. Fitting keeps every core
 * busy for the whole run; at a lower priority the kernel runs the API's request
 * handling (same machine) and each worker's lock renewals first, and fitting
 * takes the rest (checked with bench:poll: polling while a run fits).
 */
export const FITTING_NICENESS = 10

/**
 * Lowers the scheduling priority of the calling thread only (Linux: a thread's
 * id from /proc/thread-self passed to setpriority, which then applies to that
 * thread alone). Raising niceness needs no privilege. Returns false where this
 * is not supported (other systems); the thread then keeps its priority.
 */
export function lowerThreadPriority(niceness: number = FITTING_NICENESS): boolean {
  try {
    const tid = Number(readlinkSync('/proc/thread-self').split('/').pop())
    if (!Number.isInteger(tid) || tid <= 0) return false
    setPriority(tid, niceness)
    return true
  } catch {
    return false
  }
}
