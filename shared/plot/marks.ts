/**
 * Band-gap markers: a reference to an energy ("Eg", "edge.Eg") or a wavelength, resolved and placed on a spectral
 * axis in that axis's unit, so the same mark sits at 1.48 eV on an energy axis and at 837.7 nm on a wavelength axis.
 */
import { formatNumber, formatWithError } from './format'
import { resolveRef, type Resolved, type Results } from './resolve'
import { converter, prettyUnit, spectralQuantity } from './units'

export interface Mark {
  ref: string
  /** Position on the axis, in the axis unit. */
  at: number
  /** Interval of ±1 standard error on the axis, when the value carries one (fit outputs). */
  band?: [number, number]
  /** e.g. "edge.Eg = 1.481 ± 0.002 eV (837.2 nm)". */
  label: string
}

/**
 * Places one mark on an axis whose display unit is `axisUnit`. The referenced value must be a single number in a
 * spectral unit (energy, wavelength, wavenumber or frequency).
 */
export function placeMark(ref: string, results: Results, axisUnit: string | undefined): Resolved<Mark> {
  const r = resolveRef(ref, results)
  if (!r.ok) return { ok: false, message: `Mark "${ref}": ${r.message}` }
  const q = r.value
  if (q.kind !== 'scalar') return { ok: false, message: `Mark "${ref}" is a series of ${q.values.length} values; a mark needs one energy, such as a band gap.` }
  if (!spectralQuantity(q.unit))
    return { ok: false, message: `Mark "${ref}" is in ${q.unit ? `"${q.unit}"` : 'no unit'}, not an energy or a wavelength, so it cannot be placed on this axis.` }
  if (!spectralQuantity(axisUnit))
    return { ok: false, message: `Mark "${ref}" needs an energy or wavelength axis; this axis is in ${axisUnit ? `"${axisUnit}"` : 'no unit'}.` }
  const conv = converter(q.unit, axisUnit)
  if (!conv.ok) return { ok: false, message: `Mark "${ref}": ${conv.message}.` }
  const f = conv.value
  const at = f(q.value)
  if (!Number.isFinite(at)) return { ok: false, message: `Mark "${ref}" = ${formatNumber(q.value)} ${q.unit} has no position on a ${prettyUnit(axisUnit)} axis.` }
  let band: [number, number] | undefined
  if (q.error !== undefined && q.error > 0) {
    const a = f(q.value - q.error)
    const b = f(q.value + q.error)
    if (Number.isFinite(a) && Number.isFinite(b)) band = [Math.min(a, b), Math.max(a, b)]
  }
  const own = `${q.ref} = ${formatWithError(q.value, q.error)} ${prettyUnit(q.unit)}`
  const sameUnit = prettyUnit(q.unit) === prettyUnit(axisUnit)
  const label = sameUnit ? own : `${own} (${formatNumber(at)} ${prettyUnit(axisUnit)})`
  return { ok: true, value: { ref, at, band, label } }
}
