/**
 * Results cross from the worker to the page as transferred Float64Arrays instead of plain arrays: copying a plain
 * array of numbers between threads (structured clone) costs about as much per number as computing it, and a
 * 2,000-step sweep over a 2,000-point grid holds four million of them, which froze the page for most of a second
 * when it arrived. Long number arrays, and tables of equally long number rows (sweep outputs), are packed into one
 * buffer each and unpacked on the page into plain arrays again, so everything downstream sees the usual
 * JSON-ready result object.
 */
import type { CellResult, CellValue } from '../../shared/schema/result'

/** Arrays shorter than this are sent as they are (packing them gains nothing). */
const MIN_PACKED = 256

type PackedArray = { readonly packed: 'numbers'; data: Float64Array }
type PackedRows = { readonly packed: 'rows'; width: number; data: Float64Array }
type Packed = PackedArray | PackedRows

function allNumbers(values: readonly unknown[]): values is number[] {
  for (const v of values) if (typeof v !== 'number') return false
  return true
}

function isPacked(v: unknown): v is Packed {
  return typeof v === 'object' && v !== null && ((v as Packed).packed === 'numbers' || (v as Packed).packed === 'rows') && (v as Packed).data instanceof Float64Array
}

function packValue(v: unknown, transfer: ArrayBuffer[]): unknown {
  if (Array.isArray(v)) {
    if (v.length >= MIN_PACKED && allNumbers(v)) {
      const data = Float64Array.from(v)
      transfer.push(data.buffer)
      return { packed: 'numbers', data } satisfies PackedArray
    }
    const first = v[0]
    if (v.length > 0 && Array.isArray(first)) {
      const width = first.length
      if (width * v.length >= MIN_PACKED && v.every((row) => Array.isArray(row) && row.length === width && allNumbers(row))) {
        const data = new Float64Array(width * v.length)
        v.forEach((row: number[], i) => data.set(row, i * width))
        transfer.push(data.buffer)
        return { packed: 'rows', width, data } satisfies PackedRows
      }
    }
    return v.map((x) => packValue(x, transfer))
  }
  if (typeof v === 'object' && v !== null) {
    const out: Record<string, unknown> = {}
    for (const [k, x] of Object.entries(v)) out[k] = packValue(x, transfer)
    return out
  }
  return v
}

function toArray(data: Float64Array, from = 0, to = data.length): number[] {
  const out = new Array<number>(to - from)
  for (let i = from; i < to; i++) out[i - from] = data[i]
  return out
}

function unpackValue(v: unknown): unknown {
  if (isPacked(v)) {
    if (v.packed === 'numbers') return toArray(v.data)
    const rows = v.width > 0 ? v.data.length / v.width : 0
    return Array.from({ length: rows }, (_, i) => toArray(v.data, i * v.width, (i + 1) * v.width))
  }
  if (Array.isArray(v)) return v.map(unpackValue)
  if (typeof v === 'object' && v !== null) {
    const out: Record<string, unknown> = {}
    for (const [k, x] of Object.entries(v)) out[k] = unpackValue(x)
    return out
  }
  return v
}

/** Results with their long arrays packed, and the buffers to transfer with the message. */
export function packResults(results: readonly CellResult[]): { results: CellResult[]; transfer: ArrayBuffer[] } {
  const transfer: ArrayBuffer[] = []
  const packed = results.map((r) => (r.value === undefined || r.value === null || typeof r.value === 'number' ? r : { ...r, value: packValue(r.value, transfer) as CellValue }))
  return { results: packed, transfer }
}

/** The plain results again (on the page). */
export function unpackResults(results: readonly CellResult[]): CellResult[] {
  return results.map((r) => (r.value === undefined || r.value === null || typeof r.value === 'number' ? r : { ...r, value: unpackValue(r.value) as CellValue }))
}
