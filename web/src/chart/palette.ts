/**
 * Chart colours and fills. The two bands differ in lightness and in pattern
 * (95%: pale fill with diagonal hatching; 80%: a darker solid fill), and both are
 * labelled, so they read the same in greyscale and for every kind of colour vision.
 */

export type BandLevel = 80 | 95

export const CHART_COLOURS = {
  history: '#1b2a4a',
  forecast: '#9a3b0c',
  adjusted: '#0f6b63',
  past: '#5b2a86',
  whatIf: '#374151',
  band80: '#f0bf94',
  band95Base: '#fcebdc',
  band95Hatch: '#c9824a',
  bandEdge: { 80: '#a8581f', 95: '#b9834f' } as Record<BandLevel, string>,
  holdout: '#e3e9f2',
  holdoutText: '#334155',
  divider: '#64748b',
  labelText: '#4a2a10',
  axisText: '#334155',
  grid: '#e7e5e0',
} as const

/** Hatch spacing in CSS pixels. */
const HATCH = 7

const patterns = new WeakMap<CanvasRenderingContext2D, CanvasPattern | null>()

/** The 95% band's hatched fill for `ctx` (made once per canvas). */
function hatch(ctx: CanvasRenderingContext2D): CanvasPattern | string {
  if (!patterns.has(ctx)) {
    const ratio = window.devicePixelRatio || 1
    const size = Math.round(HATCH * ratio)
    const tile = document.createElement('canvas')
    tile.width = size
    tile.height = size
    const t = tile.getContext('2d')!
    t.fillStyle = CHART_COLOURS.band95Base
    t.fillRect(0, 0, size, size)
    t.strokeStyle = CHART_COLOURS.band95Hatch
    t.lineWidth = 1.5 * ratio
    // A diagonal, continued across tile edges so the stripes join up.
    for (const offset of [-size, 0, size]) {
      t.beginPath()
      t.moveTo(offset, size)
      t.lineTo(offset + size, 0)
      t.stroke()
    }
    patterns.set(ctx, ctx.createPattern(tile, 'repeat'))
  }
  return patterns.get(ctx) ?? CHART_COLOURS.band95Base
}

export function bandFill(ctx: CanvasRenderingContext2D, level: BandLevel): CanvasPattern | string {
  return level === 95 ? hatch(ctx) : CHART_COLOURS.band80
}

/** Paints a legend swatch with exactly the fill the chart uses. */
export function paintSwatch(canvas: HTMLCanvasElement, level: BandLevel): void {
  const ratio = window.devicePixelRatio || 1
  const w = canvas.clientWidth || 28
  const h = canvas.clientHeight || 14
  canvas.width = Math.round(w * ratio)
  canvas.height = Math.round(h * ratio)
  const ctx = canvas.getContext('2d')
  if (!ctx) return
  ctx.fillStyle = bandFill(ctx, level)
  ctx.fillRect(0, 0, canvas.width, canvas.height)
  ctx.strokeStyle = CHART_COLOURS.bandEdge[level]
  ctx.lineWidth = ratio
  if (level === 95) ctx.setLineDash([2 * ratio, 3 * ratio])
  ctx.strokeRect(ratio / 2, ratio / 2, canvas.width - ratio, canvas.height - ratio)
}
