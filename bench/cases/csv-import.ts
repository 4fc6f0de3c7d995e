/**
 * csv-import-100k: parse and map a 100,000-row, 4-column instrument export (two metadata lines, a header row with
 * units, wavelength descending as many instruments scan) from its bytes to named, sorted Float64 columns, against
 * papaparse's own parse of the same text in the same run (split only, strings out). Target ≤ 1.5×.
 */
import Papa from 'papaparse'
import { importSpectrum } from '../../shared/import/spectrumFile'
import { measurePair, printBench, printTarget } from '../harness'

const ROWS = 100_000

function exportText(): string {
  const lines = ['Halvorsen Thin-Film Lab, film B on glass (invented data)', 'Scan,descending', 'Wavelength (nm),%T,R%,Abs']
  for (let i = 0; i < ROWS; i++) {
    const nm = 1100 - i * 0.008
    const t = 60 + 30 * Math.sin(i / 5000)
    lines.push(`${nm.toFixed(3)},${t.toFixed(4)},${(8 + (i % 97) / 50).toFixed(4)},${(-Math.log10(t / 100)).toFixed(5)}`)
  }
  return `${lines.join('\r\n')}\r\n`
}

export default async function csvImport(): Promise<void> {
  const text = exportText()
  const bytes = new TextEncoder().encode(text)
  const ours = () => importSpectrum(bytes)
  const papa = () => Papa.parse<string[]>(new TextDecoder().decode(bytes))
  const check = ours()
  const cols = check.spectrum.columns
  if (cols.length !== 4 || cols[0].values.length !== ROWS || !(cols[0].values[0] < cols[0].values[1]))
    throw new Error('csv-import-100k: the export was not read as 4 sorted columns of 100,000 rows')
  const [mine, base] = measurePair(ours, papa, { warmup: 3, runs: 11 })
  const ratio = mine.medianMs / base.medianMs
  printBench('csv-import-100k', mine.medianMs, ratio, 'papaparse alone')
  printTarget('≤ 1.5x papaparse alone', ratio <= 1.5)
}
