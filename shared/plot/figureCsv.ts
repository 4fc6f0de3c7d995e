/**
 * The numbers of a drawn figure as CSV (RFC 4180: comma-separated, CRLF line ends, fields with commas, quotes or
 * line breaks quoted): the "CSV" button of a figure's toolbar.
 *
 * Traces and sweep curves: two columns each, x and y, headed "<trace> · <axis title>"; traces of different lengths
 * leave the shorter columns empty below their end. A sweep map: the first row holds the x values, each further row
 * one parameter value followed by its row of the map. Points that cannot be drawn (NaN, ±∞) are empty fields.
 *
 *   figureCsv({ series: [{ name: 'α', x: [1, 2], y: [10, 20], … }], x: { title: 'E (eV)' }, y: { title: 'α (cm⁻¹)' }, … })
 *   // 'α · E (eV),α · α (cm⁻¹)\r\n1,10\r\n2,20\r\n'
 */
import type { FigureModel } from './figure'
import { formatNumber } from './format'
import { prettyUnit } from './units'

function field(text: string): string {
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text
}

function num(v: number | undefined): string {
  return v !== undefined && Number.isFinite(v) ? String(v) : ''
}

function lines(rows: string[][]): string {
  return rows.map((r) => r.map(field).join(',')).join('\r\n') + '\r\n'
}

export function figureCsv(model: FigureModel): string {
  const sweep = model.sweep
  if (sweep?.view === 'map') {
    const m = sweep.map
    const pu = prettyUnit(m.parameterUnit)
    const corner = `${sweep.zTitle} · rows: ${model.y.title || `parameter${pu ? ` (${pu})` : ''}` }, columns: ${model.x.title}`
    return lines([[corner, ...m.x.map(num)], ...m.y.map((p, i) => [num(p), ...(m.z[i] ?? []).map(num)])])
  }
  const columns: { name: string; x: readonly number[]; y: readonly number[] }[] = model.series.map((s) => ({ name: s.name, x: s.x, y: s.y }))
  if (sweep?.view === 'curves') {
    const pu = prettyUnit(sweep.family.parameterUnit)
    for (const c of sweep.family.curves) columns.push({ name: `${sweep.parameterLabel} = ${formatNumber(c.parameter)}${pu ? ` ${pu}` : ''}`, x: c.x, y: c.y })
  }
  const header = columns.flatMap((c) => [`${c.name} · ${model.x.title}`, `${c.name} · ${model.y.title}`])
  const length = Math.max(0, ...columns.map((c) => Math.max(c.x.length, c.y.length)))
  const rows: string[][] = [header]
  for (let i = 0; i < length; i++) rows.push(columns.flatMap((c) => [i < c.x.length ? num(c.x[i]) : '', i < c.y.length ? num(c.y[i]) : '']))
  return lines(rows)
}
