// Fixtures: small instrument exports written for these tests in the dialects spectrophotometer software writes
// (invented values of the fictional Halvorsen Thin-Film Lab; the layouts are common practice, not copied files).
import { describe, expect, it } from 'vitest'
import {
  decodeText, importSpectrum, mapSpectrum, parseSpectrumFile, readLabel, SpectrumFileError, type MappingOptions,
} from '../../../shared/import/spectrumFile'

function utf16(text: string, endian: 'le' | 'be', bom = true): Uint8Array {
  const out = new Uint8Array((bom ? 2 : 0) + text.length * 2)
  let o = 0
  if (bom) {
    out[o++] = endian === 'le' ? 0xff : 0xfe
    out[o++] = endian === 'le' ? 0xfe : 0xff
  }
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i)
    out[o++] = endian === 'le' ? c & 0xff : c >> 8
    out[o++] = endian === 'le' ? c >> 8 : c & 0xff
  }
  return out
}

const utf8 = (text: string, bom = false) => {
  const body = new TextEncoder().encode(text)
  if (!bom) return body
  const out = new Uint8Array(body.length + 3)
  out.set([0xef, 0xbb, 0xbf])
  out.set(body, 3)
  return out
}

function columnsOf(input: Uint8Array | string, options: MappingOptions = {}) {
  const { file, spectrum } = importSpectrum(input, options)
  return { file, spectrum, byName: Object.fromEntries(spectrum.columns.map((c) => [c.name, [...c.values]])) }
}

function failure(fn: () => unknown): SpectrumFileError {
  try {
    fn()
  } catch (err) {
    if (err instanceof SpectrumFileError) return err
    throw err
  }
  throw new Error('expected a SpectrumFileError')
}

const COMMA = [
  'Halvorsen Thin-Film Lab — film B on glass',
  'Scan speed,600 nm/min',
  'Wavelength (nm),%T,R%',
  '400,80.5,10.0',
  '401,81.0,10.5',
  '402,82.25,11.0',
  '',
].join('\n')

describe('parseSpectrumFile / mapSpectrum: dialects', () => {
  it('parseSpectrumFile reads a comma-separated export with metadata lines above a header row', () => {
    const { file, byName } = columnsOf(COMMA)
    expect(file.dialect).toMatchObject({ separator: 'comma', decimal: '.', firstLine: 4, headerLine: 3 })
    expect(file.columns.map((c) => [c.quantity, c.unit, c.guessed])).toEqual([['wavelength', 'nm', false], ['T', '%', false], ['R', '%', false]])
    expect(byName).toEqual({ wavelength: [400, 401, 402], T: [80.5, 81, 82.25], R: [10, 10.5, 11] })
    expect(file.samples).toHaveLength(1)
  })

  it('parseSpectrumFile reads semicolons with decimal commas and CRLF line ends', () => {
    const text = 'Wavelength [nm];T (%)\r\n500;80,5\r\n510;81,25\r\n520;82,0\r\n'
    const { file, byName } = columnsOf(text)
    expect(file.dialect).toMatchObject({ separator: 'semicolon', decimal: ',' })
    expect(byName).toEqual({ wavelength: [500, 510, 520], T: [80.5, 81.25, 82] })
  })

  it('parseSpectrumFile reads tabs with decimal commas', () => {
    const { file, byName } = columnsOf('λ [nm]\tAbs\n300\t1,25\n310\t1,5\n320\t0,75\n')
    expect(file.dialect).toMatchObject({ separator: 'tab', decimal: ',' })
    expect(file.columns.map((c) => c.quantity)).toEqual(['wavelength', 'A10'])
    expect(byName).toEqual({ wavelength: [300, 310, 320], A10: [1.25, 1.5, 0.75] })
  })

  it('parseSpectrumFile reads whitespace-separated columns aligned with runs of spaces', () => {
    const { file, byName } = columnsOf('  Energy/eV     Abs\n   1.50    0.20\n   1.60    0.35\n   1.70    0.90\n')
    expect(file.dialect.separator).toBe('whitespace')
    expect(file.columns.map((c) => [c.quantity, c.unit])).toEqual([['energy', 'eV'], ['A10', '']])
    expect(byName.energy).toEqual([1.5, 1.6, 1.7])
  })

  it('parseSpectrumFile reads UTF-8 with a BOM, UTF-16 LE and BE with a BOM, and UTF-16 LE without one', () => {
    const text = 'Wavelength (nm),T (%)\r\n600,70\r\n610,71\r\n'
    for (const [bytes, encoding] of [
      [utf8(text, true), 'UTF-8 (with BOM)'],
      [utf16(text, 'le'), 'UTF-16 LE'],
      [utf16(text, 'be'), 'UTF-16 BE'],
      [utf16(text, 'le', false), 'UTF-16 LE'],
    ] as const) {
      const { file, byName } = columnsOf(bytes)
      expect(file.dialect.encoding).toBe(encoding)
      expect(byName).toEqual({ wavelength: [600, 610], T: [70, 71] })
    }
  })

  it('decodeText reads Windows-1252 when the bytes are not UTF-8 (µm written as one byte)', () => {
    const bytes = new Uint8Array([...new TextEncoder().encode('x ('), 0xb5, ...new TextEncoder().encode('m)')])
    expect(decodeText(bytes)).toEqual({ text: 'x (µm)', encoding: 'Windows-1252' })
  })

  it('readLabel knows the usual spellings of quantities and units', () => {
    // spellings as instrument software writes them (common practice)
    const cases: [string, string | undefined, string | undefined][] = [
      ['Wavelength (nm)', 'wavelength', 'nm'], ['nm', 'wavelength', 'nm'], ['λ [nm]', 'wavelength', 'nm'],
      ['Wavelength (µm)', 'wavelength', 'µm'], ['%T', 'T', '%'], ['T (%)', 'T', '%'], ['Abs', 'A10', undefined],
      ['R%', 'R', '%'], ['Energy/eV', 'energy', 'eV'], ['cm-1', 'wavenumber', '1/cm'], ['Wavenumber (cm-1)', 'wavenumber', '1/cm'],
      ['alpha (cm-1)', 'alpha', '1/cm'], ['Absorptance', 'A', undefined], ['Transmittance', 'T', undefined], ['n', 'n', undefined], ['k', 'k', undefined],
    ]
    for (const [label, quantity, unit] of cases) expect([label, readLabel(label).quantity, readLabel(label).unit]).toEqual([label, quantity, unit])
  })

  it('parseSpectrumFile marks every column of a file without a header as a guess, with the reason', () => {
    const { file } = columnsOf('300 0.52\n310 0.61\n320 0.70\n')
    expect(file.columns.map((c) => [c.quantity, c.unit, c.guessed])).toEqual([['wavelength', 'nm', true], ['T', '', true]])
    expect(file.columns[1].note).toMatch(/0\.52 to 0\.7: read as transmittance/)
    expect(file.warnings.join(' ')).toMatch(/no header row/)
  })

  it('parseSpectrumFile marks a percent-looking column with no unit in its header as a guess', () => {
    const { file } = columnsOf('nm,T\n300,52\n310,61\n')
    expect(file.columns[1]).toMatchObject({ quantity: 'T', unit: '%', guessed: true })
    expect(file.columns[1].note).toMatch(/no unit in the header/)
  })

  it('mapSpectrum reverses a descending x column and says so', () => {
    const { spectrum, byName } = columnsOf('nm,%T\n720,90\n710,85\n700,80\n')
    expect(byName).toEqual({ wavelength: [700, 710, 720], T: [80, 85, 90] })
    expect(spectrum.warnings.join(' ')).toMatch(/descending \(720 to 700\)/)
  })

  it('mapSpectrum sorts an unsorted x column, carrying the other columns along', () => {
    const { spectrum, byName } = columnsOf('nm,%T\n710,85\n700,80\n720,90\n')
    expect(byName).toEqual({ wavelength: [700, 710, 720], T: [80, 85, 90] })
    expect(spectrum.warnings.join(' ')).toMatch(/not in order; the rows were sorted/)
  })

  it('parseSpectrumFile offers one sample per measured column when one x carries several of the same quantity', () => {
    const text = 'nm,film A %T,film B %T\n400,50,60\n410,51,61\n'
    const file = parseSpectrumFile(text)
    expect(file.samples.map((s) => [s.name, s.columns])).toEqual([['film A', ['c1', 'c2']], ['film B', ['c1', 'c3']]])
    const b = mapSpectrum(file, { sample: 'film B' })
    expect(b.columns.map((c) => [c.name, [...c.values]])).toEqual([['wavelength', [400, 410]], ['T', [60, 61]]])
  })

  it('parseSpectrumFile splits repeated x/y pairs into samples, names from the line above, each its own length', () => {
    const text = 'film A,,film B,\nnm,%T,nm,%T\n300,10,305,20\n310,11,315,21\n320,12,,\n'
    const file = parseSpectrumFile(text)
    expect(file.samples.map((s) => [s.name, s.columns])).toEqual([['film A', ['c1', 'c2']], ['film B', ['c3', 'c4']]])
    expect(mapSpectrum(file, { sample: 's2' }).columns.map((c) => [...c.values])).toEqual([[305, 315], [20, 21]])
    expect(mapSpectrum(file, { sample: 'film A' }).columns.map((c) => [...c.values])).toEqual([[300, 310, 320], [10, 11, 12]])
  })

  it('mapSpectrum takes the confirmed mapping: chosen columns, names, quantities and units', () => {
    const file = parseSpectrumFile('x,y,z\n1.5,0.2,7\n1.6,0.3,8\n')
    const m = mapSpectrum(file, { columns: [{ key: 'c1', quantity: 'energy', unit: 'eV' }, { key: 'c3', name: 'Rfilm', quantity: 'R', unit: '%' }] })
    expect(m.columns.map((c) => [c.name, c.quantity, c.unit, [...c.values]])).toEqual([['energy', 'energy', 'eV', [1.5, 1.6]], ['Rfilm', 'R', '%', [7, 8]]])
  })
})

describe('parseSpectrumFile / mapSpectrum: bad files', () => {
  it('names the line and column of text in a numeric column', () => {
    const e = failure(() => parseSpectrumFile('nm,T\n300,1\n310,1.5\n320,abc\n330,4\n340,5\n'))
    expect(e.message).toBe('Line 4, column 2: "abc" is not a number (column T). The numbers start on line 2; text is allowed only above them.')
    expect(e.issues[0]).toEqual({ line: 4, column: 2, message: '"abc" is not a number (column T)' })
  })

  it('names a ragged row with too few values', () => {
    const e = failure(() => parseSpectrumFile('nm,T,R\n300,1,2\n310,2\n320,3,4\n'))
    expect(e.message).toBe('Line 3 has fewer values than the rows above it (3); every row of the data must have the same columns.')
    expect(e.issues[0]).toMatchObject({ line: 3, column: 3 })
  })

  it('names a ragged row with too many values', () => {
    const e = failure(() => parseSpectrumFile('nm,T\n300,1\n310,2,9\n320,3\n'))
    expect(e.message).toBe('Line 3 has more values than the rows above it (2); every row of the data must have the same columns.')
    expect(e.issues[0]).toMatchObject({ line: 3, column: 3 })
  })

  it('refuses duplicate x values and offers to average them', () => {
    const file = parseSpectrumFile('nm,%T\n300,10\n310,20\n310,30\n320,40\n')
    const e = failure(() => mapSpectrum(file))
    expect(e.message).toBe('Line 4, column 1: the wavelength 310 also on line 3 (1 repeated value). Average the rows that share a value, or fix the file.')
    expect(e.offer).toBe('averageDuplicates')
    const m = mapSpectrum(file, { averageDuplicates: true })
    expect(m.columns.map((c) => [...c.values])).toEqual([[300, 310, 320], [10, 25, 40]])
    expect(m.warnings.join(' ')).toMatch(/Averaged 1 repeated wavelength value \(4 rows became 3\)/)
  })

  it('refuses empty and NaN cells and offers to drop their rows', () => {
    const file = parseSpectrumFile('nm,%T\n300,10\n310,\n320,NaN\n330,40\n')
    const e = failure(() => mapSpectrum(file))
    expect(e.message).toBe('Line 3, column 2 is empty or not a number (2 rows like this). Drop those rows, or fix the file.')
    expect(e.issues.map((i) => i.line)).toEqual([3, 4])
    expect(e.offer).toBe('dropEmptyRows')
    const m = mapSpectrum(file, { dropEmptyRows: true })
    expect(m.columns.map((c) => [...c.values])).toEqual([[300, 330], [10, 40]])
    expect(m.warnings.join(' ')).toMatch(/Dropped 2 rows with an empty or NaN cell \(first: line 3\)/)
  })

  it('says when there is no block of numbers', () => {
    const e = failure(() => parseSpectrumFile('Sample: film B\nOperator: I. Halvorsen\n'))
    expect(e.message).toBe('No block of numbers was found: expected rows of at least two numbers separated by commas, semicolons, tabs or spaces.')
  })

  it('says when the file has a single column', () => {
    const e = failure(() => parseSpectrumFile('nm\n300\n310\n320\n'))
    expect(e.message).toMatch(/^The file has a single column of numbers; a spectrum needs at least two/)
    expect(e.issues[0].line).toBe(2)
  })

  it('says when the file is empty', () => {
    expect(failure(() => parseSpectrumFile('  \n\n')).message).toBe('The file is empty.')
  })

  it('refuses more numbers than one import takes, saying how many', () => {
    const rows = Array.from({ length: 40 }, (_, i) => `${300 + i},${i}`).join('\n')
    const e = failure(() => parseSpectrumFile(`nm,T\n${rows}\n`, { maxNumbers: 50 }))
    expect(e.message).toBe('The file holds about 80 numbers (40 rows × 2 columns); one import takes at most 50. Split the file or thin the data first.')
  })

  it('refuses an unknown sample, naming the ones the file has', () => {
    const file = parseSpectrumFile(COMMA)
    expect(failure(() => mapSpectrum(file, { sample: 'film Z' })).message).toBe('The file has no sample "film Z"; it has "all columns".')
  })
})

describe('parseSpectrumFile: long files, blank lines and footers', () => {
  // 120,000 rows (about 2.4 MB) span several of the chunks papaparse hands over, so rows cross chunk boundaries
  const ROWS = 120_000
  const long = (tail: string) =>
    `Halvorsen lab export (invented)\nWavelength (nm),%T\n${Array.from({ length: ROWS }, (_, i) => `${(300 + i * 0.005).toFixed(3)},${(i % 1000) / 10}`).join('\n')}\n${tail}`

  it('reads every row of a file longer than one chunk, leaving out a footer after a blank line', () => {
    const file = parseSpectrumFile(long('\nEnd of data\nOperator: T. Reyes\n\n'))
    const x = file.values.get('c1')!
    const t = file.values.get('c2')!
    expect(x.length).toBe(ROWS)
    expect(t.length).toBe(ROWS)
    for (const i of [0, 1, 40_000, 47_661, 99_999, ROWS - 1]) {
      expect(x[i]).toBe(Number((300 + i * 0.005).toFixed(3)))
      expect(t[i]).toBe((i % 1000) / 10)
    }
    expect(file.columns.map((c) => c.count)).toEqual([ROWS, ROWS])
  })

  it('names the exact line of a bad cell far into a long file', () => {
    const text = long('').replace('\n500.000,0\n', '\n500.000,0\n500.005,n.m.\n')
    const e = failure(() => parseSpectrumFile(text))
    // row 40,000 of the data (x = 500.000) is on line 40,003 (two lines above the data); the bad row follows it
    expect(e.issues[0]).toEqual({ line: 40_004, column: 2, message: '"n.m." is not a number (column %T)' })
  })

  it('keeps a blank line inside the data as an empty row (to drop on request), and numbers after it', () => {
    const text = 'nm,T\n400,10\n401,11\n\n402,12\n403,13\n\nscan ended\n'
    const e = failure(() => importSpectrum(text))
    expect(e.offer).toBe('dropEmptyRows')
    expect(e.issues[0].line).toBe(4)
    const { spectrum } = importSpectrum(text, { dropEmptyRows: true })
    expect(Array.from(spectrum.columns[0].values)).toEqual([400, 401, 402, 403])
    expect(Array.from(spectrum.columns[1].values)).toEqual([10, 11, 12, 13])
  })

  it('reports text after a blank line when numbers follow it, as part of the data', () => {
    const e = failure(() => parseSpectrumFile('nm,T\n400,10\n401,11\n\nrecalibrated\n402,12\n403,13\n'))
    expect(e.issues[0]).toMatchObject({ line: 5, column: 1 })
  })
})
