/**
 * Thinning very long series for drawing. Buckets of consecutive points keep their first, lowest, highest and last
 * point in their original order, so narrow peaks and dips survive and the drawn line looks the same at screen
 * resolution (the min–max / M4 idea; common practice in time-series plotting).
 */

export interface XY {
  x: number[]
  y: number[]
}

/**
 * At most about `maxPoints` points of (x, y), chosen per bucket as first, min, max and last by y. Series at or under
 * the limit come back unchanged. NaN points (gaps) are kept where they fall in a bucket so gaps stay visible.
 */
export function downsample(x: readonly number[], y: readonly number[], maxPoints = 4000): XY {
  const n = Math.min(x.length, y.length)
  if (n <= maxPoints || maxPoints < 8) return { x: x.slice(0, n), y: y.slice(0, n) }
  const buckets = Math.max(1, Math.floor(maxPoints / 4))
  const size = n / buckets
  const ox: number[] = []
  const oy: number[] = []
  for (let b = 0; b < buckets; b++) {
    const start = Math.floor(b * size)
    const end = Math.min(n, Math.floor((b + 1) * size))
    if (end <= start) continue
    let iMin = -1
    let iMax = -1
    let iGap = -1
    for (let i = start; i < end; i++) {
      const v = y[i]
      if (Number.isNaN(v)) {
        if (iGap < 0) iGap = i
        continue
      }
      if (iMin < 0 || v < y[iMin]) iMin = i
      if (iMax < 0 || v > y[iMax]) iMax = i
    }
    const keep = new Set<number>([start, end - 1])
    if (iMin >= 0) keep.add(iMin)
    if (iMax >= 0) keep.add(iMax)
    if (iGap >= 0) keep.add(iGap)
    for (const i of [...keep].sort((p, q) => p - q)) {
      ox.push(x[i])
      oy.push(y[i])
    }
  }
  return { x: ox, y: oy }
}

/**
 * A matrix with at most `maxColumns` columns, averaging runs of neighbouring columns (NaNs ignored), with the
 * matching x positions (mean of each run). For maps whose rows are longer than the screen is wide.
 */
export function downsampleColumns(x: readonly number[], z: readonly (readonly number[])[], maxColumns = 1500): { x: number[]; z: number[][] } {
  const n = x.length
  if (n <= maxColumns) return { x: [...x], z: z.map((row) => [...row]) }
  const size = n / maxColumns
  const ranges: [number, number][] = []
  for (let b = 0; b < maxColumns; b++) ranges.push([Math.floor(b * size), Math.min(n, Math.floor((b + 1) * size))])
  const mean = (v: readonly number[], a: number, e: number): number => {
    let s = 0
    let k = 0
    for (let i = a; i < e; i++)
      if (Number.isFinite(v[i])) {
        s += v[i]
        k++
      }
    return k > 0 ? s / k : NaN
  }
  return { x: ranges.map(([a, e]) => mean(x, a, e)), z: z.map((row) => ranges.map(([a, e]) => mean(row, a, e))) }
}
