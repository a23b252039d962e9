/** Command-line options shared by the benchmarks. */

/** `--name N` as a positive integer, or `fallback` when absent. */
export function positiveIntOption(name: string, fallback: number): number {
  const at = process.argv.indexOf(`--${name}`)
  const value = at >= 0 ? Number(process.argv[at + 1]) : fallback
  if (!Number.isInteger(value) || value < 1) throw new Error(`--${name} must be a positive integer`)
  return value
}
