/**
 * Penumbra's own colours for data: a trace sequence built around the night-blue frame and the warm accent, and a
 * ramp (deep night → sea green → sand → warm copper) for families of curves and maps.
 */

/** Trace colours in the order traces take them. */
export const TRACE_COLORS: readonly string[] = [
  '#23406e', // night blue
  '#2b8a84', // teal
  '#8c4a86', // plum
  '#c2622d', // copper (kept off second place: the warm accent marks band gaps)
  '#6f8a2a', // moss
  '#b8455a', // brick rose
  '#5b7a9c', // slate
  '#b38a1e', // ochre
]

/** The colour of the i-th trace (the sequence repeats). */
export function traceColor(i: number): string {
  const n = TRACE_COLORS.length
  return TRACE_COLORS[((i % n) + n) % n]
}

/** Ramp stops, position 0–1 → colour. */
export const RAMP: readonly (readonly [number, string])[] = [
  [0, '#1c2d55'],
  [0.3, '#2e6f8e'],
  [0.55, '#5aa38a'],
  [0.8, '#d9b44a'],
  [1, '#c8562a'],
]

function hexToRgb(hex: string): [number, number, number] {
  const n = parseInt(hex.slice(1), 16)
  return [(n >> 16) & 255, (n >> 8) & 255, n & 255]
}

function toHex(rgb: readonly number[]): string {
  return `#${rgb.map((v) => Math.round(v).toString(16).padStart(2, '0')).join('')}`
}

/** Colour at t in [0, 1] on the ramp (clamped), interpolated between stops. rampColor(0) → '#1c2d55'. */
export function rampColor(t: number): string {
  const x = Number.isFinite(t) ? Math.min(1, Math.max(0, t)) : 0
  for (let i = 1; i < RAMP.length; i++) {
    const [p1, c1] = RAMP[i]
    if (x <= p1) {
      const [p0, c0] = RAMP[i - 1]
      const f = p1 === p0 ? 0 : (x - p0) / (p1 - p0)
      const a = hexToRgb(c0)
      const b = hexToRgb(c1)
      return toHex(a.map((v, k) => v + (b[k] - v) * f))
    }
  }
  return RAMP[RAMP.length - 1][1]
}

/** n colours evenly along the ramp (one per parameter value of a sweep). */
export function rampColors(n: number): string[] {
  if (n <= 0) return []
  if (n === 1) return [rampColor(0)]
  return Array.from({ length: n }, (_, i) => rampColor(i / (n - 1)))
}

/** The ramp as a colour scale ([position, colour] pairs) for maps and colour bars. */
export function rampScale(): [number, string][] {
  return RAMP.map(([p, c]) => [p, c])
}
