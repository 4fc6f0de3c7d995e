/**
 * The numbers of a drawn figure as CSV (RFC 4180: comma-separated, CRLF line ends, fields with commas, quotes or
 * line breaks quoted, written by shared/export/csv.ts like every CSV file of Penumbra): the "CSV" button of a figure's
 * toolbar.
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
import { csvHeader, csvRows, toCsv, type CsvColumn } from '../export/csv'

export function figureCsv(model: FigureModel): string {
  const sweep = model.sweep
  if (sweep?.view === 'map') {
    const m = sweep.map
    const corner = `${sweep.zTitle} · rows: ${model.y.title || csvHeader('parameter', prettyUnit(m.parameterUnit))}, columns: ${model.x.title}`
    return csvRows([[corner, ...m.x], ...m.y.map((p, i) => [p, ...(m.z[i] ?? [])])])
  }
  const traces: { name: string; x: readonly number[]; y: readonly number[] }[] = model.series.map((s) => ({ name: s.name, x: s.x, y: s.y }))
  if (sweep?.view === 'curves') {
    const pu = prettyUnit(sweep.family.parameterUnit)
    for (const c of sweep.family.curves) traces.push({ name: `${sweep.parameterLabel} = ${formatNumber(c.parameter)}${pu ? ` ${pu}` : ''}`, x: c.x, y: c.y })
  }
  const columns: CsvColumn[] = traces.flatMap((t) => [
    { header: `${t.name} · ${model.x.title}`, values: t.x },
    { header: `${t.name} · ${model.y.title}`, values: t.y },
  ])
  return toCsv(columns)
}
