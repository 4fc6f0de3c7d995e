/**
 * Instrument exports → spectrum columns. Reads the text files spectrophotometers write (comma-, semicolon-, tab- or
 * whitespace-separated; decimal commas; header and metadata lines before the numbers; UTF-8 with or without BOM,
 * UTF-16 with BOM; CRLF), finds the numeric block, reads the header row's names and units, groups the columns into
 * samples, and maps a chosen sample to named columns with a quantity and a unit each. Splitting is papaparse's;
 * this module decides the dialect, checks every cell and says exactly where a file is wrong ("line 12, column 3").
 *
 * Nothing is guessed silently: every column whose quantity or unit did not come from its header is `guessed`, with
 * the reason in `note`. Pure TypeScript (the page previews with it; the server imports with it).
 */
import Papa from 'papaparse'
import { IDENTIFIER, type SpectrumQuantity } from '../schema/sheet'

/** The most numbers one import may hold (issue: 1,000,000). */
export const MAX_IMPORT_NUMBERS = 1_000_000
/** Rows of the numeric block shown in a preview. */
export const PREVIEW_ROWS = 20

/** Quantities that serve as the x axis of a spectrum. */
export const X_QUANTITIES: ReadonlySet<string> = new Set(['wavelength', 'energy', 'wavenumber'])

/** Units offered per quantity ('' is a plain fraction, or no unit). The first is the usual one. */
export const UNITS_OF: Record<SpectrumQuantity, readonly string[]> = {
  wavelength: ['nm', 'µm'],
  energy: ['eV'],
  wavenumber: ['1/cm'],
  T: ['%', ''],
  R: ['%', ''],
  A: ['%', ''],
  A10: [''],
  alpha: ['1/cm', '1/m'],
  n: [''],
  k: [''],
  other: [''],
}

/** One problem of a file, at a line (1-based, as an editor counts) and a column (1-based) when it has one. */
export interface FileIssue {
  line?: number
  column?: number
  message: string
}

/** `line 12, column 3` (or the part that is known). */
export function issuePath(issue: FileIssue): string {
  return [issue.line !== undefined ? `line ${issue.line}` : '', issue.column !== undefined ? `column ${issue.column}` : ''].filter(Boolean).join(', ')
}

/** A file that cannot be imported as it is; `issues` says where. `offer` names an option that would get past it. */
export class SpectrumFileError extends Error {
  constructor(
    message: string,
    readonly issues: FileIssue[],
    readonly offer?: 'averageDuplicates' | 'dropEmptyRows',
  ) {
    super(message)
    this.name = 'SpectrumFileError'
  }
}

export interface ImportColumn {
  /** Stable key of the column in the file: `c1`, `c2`, … (its position). */
  key: string
  /** The header text, or `column 3` when the file has none. */
  label: string
  quantity: SpectrumQuantity
  /** A unit the engine reads: nm, µm, eV, 1/cm, %, '' (fraction / none). */
  unit: string
  /** True when the quantity or the unit was not written in the header. */
  guessed: boolean
  /** Why the guess, or what was read: "from the header", "values between 0 and 100: read as percent". */
  note: string
  /** Entries (to the last one written; later rows of other samples may be longer). */
  count: number
  min: number
  max: number
}

export interface ImportSample {
  key: string
  name: string
  /** Keys of its columns, the x column first. */
  columns: string[]
}

export interface ParsedSpectrumFile {
  columns: ImportColumn[]
  samples: ImportSample[]
  /** The first rows of the numeric block (numbers; null for an empty cell). */
  rows: (number | null)[][]
  warnings: string[]
  /** How the file was read, for the preview: separator, decimal mark, encoding, where the numbers start. */
  dialect: { separator: 'comma' | 'semicolon' | 'tab' | 'whitespace'; decimal: '.' | ','; encoding: string; firstLine: number; headerLine?: number }
  /** Every column's numbers (NaN for an empty cell), by key. */
  values: Map<string, Float64Array>
}

export interface MappedColumn {
  name: string
  quantity: SpectrumQuantity
  unit: string
  values: Float64Array
}

export interface MappingOptions {
  /** The columns to take, with their names, quantities and units; default: the chosen sample's, as guessed. */
  columns?: { key: string; name?: string; quantity?: SpectrumQuantity; unit?: string }[]
  /** The sample's key or name; default the first. */
  sample?: string
  /** Average the entries of rows with the same x instead of refusing them. */
  averageDuplicates?: boolean
  /** Drop rows with an empty or NaN cell in a taken column instead of refusing them. */
  dropEmptyRows?: boolean
}

export interface MappedSpectrum {
  sample: string
  columns: MappedColumn[]
  warnings: string[]
}

// ---------------------------------------------------------------------------------------------------------------
// text

/** Bytes → text: UTF-8 (BOM or not), UTF-16 LE/BE with BOM (or without, when every other byte is zero). */
export function decodeText(bytes: Uint8Array): { text: string; encoding: string } {
  const b = bytes
  if (b.length >= 2 && b[0] === 0xff && b[1] === 0xfe) return { text: new TextDecoder('utf-16le').decode(b.subarray(2)), encoding: 'UTF-16 LE' }
  if (b.length >= 2 && b[0] === 0xfe && b[1] === 0xff) return { text: new TextDecoder('utf-16be').decode(b.subarray(2)), encoding: 'UTF-16 BE' }
  if (b.length >= 3 && b[0] === 0xef && b[1] === 0xbb && b[2] === 0xbf) return { text: new TextDecoder('utf-8').decode(b.subarray(3)), encoding: 'UTF-8 (with BOM)' }
  if (b.length >= 4) {
    // UTF-16 without a BOM: ASCII text has a zero in every other byte
    let evenZero = 0
    let oddZero = 0
    const n = Math.min(b.length - (b.length % 2), 4000)
    for (let i = 0; i < n; i += 2) {
      if (b[i] === 0) evenZero++
      if (b[i + 1] === 0) oddZero++
    }
    if (oddZero > n / 2 * 0.9) return { text: new TextDecoder('utf-16le').decode(b), encoding: 'UTF-16 LE' }
    if (evenZero > n / 2 * 0.9) return { text: new TextDecoder('utf-16be').decode(b), encoding: 'UTF-16 BE' }
  }
  try {
    return { text: new TextDecoder('utf-8', { fatal: true }).decode(b), encoding: 'UTF-8' }
  } catch {
    // older instrument software writes Windows-1252 (µ, °, Å as single bytes)
    return { text: new TextDecoder('windows-1252').decode(b), encoding: 'Windows-1252' }
  }
}

// ---------------------------------------------------------------------------------------------------------------
// dialect

type Separator = ParsedSpectrumFile['dialect']['separator']
interface Dialect {
  separator: Separator
  decimal: '.' | ','
}

const DIALECTS: Dialect[] = [
  { separator: 'tab', decimal: '.' },
  { separator: 'tab', decimal: ',' },
  { separator: 'semicolon', decimal: ',' },
  { separator: 'semicolon', decimal: '.' },
  { separator: 'comma', decimal: '.' },
  { separator: 'whitespace', decimal: '.' },
]

const DELIMITER: Record<Separator, string> = { comma: ',', semicolon: ';', tab: '\t', whitespace: '\t' }

const NUMBER = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/
const NUMBER_COMMA = /^[+-]?(?:\d+(?:,\d*)?|,\d+)(?:[eE][+-]?\d+)?$/
/** Cells read as missing: empty, NaN, n/a, -, --- … */
const MISSING = /^(?:|nan|n\/a|na|-+|null|inf|-inf|\+inf)$/i

function cellNumber(raw: string, decimal: '.' | ','): number | null | undefined {
  const t = raw.trim()
  if (MISSING.test(t)) return null
  if (decimal === '.' ? NUMBER.test(t) : NUMBER_COMMA.test(t)) return Number(decimal === '.' ? t : t.replace(',', '.'))
  return undefined
}

/** Whitespace-separated lines → tab-separated (runs of spaces and tabs are one separator; edges trimmed). */
function whitespaceToTabs(text: string): string {
  return text.replace(/^[ \t]+|[ \t]+$/gm, '').replace(/[ \t]+/g, '\t')
}

function splitLines(text: string, dialect: Dialect): string[][] {
  const body = dialect.separator === 'whitespace' ? whitespaceToTabs(text) : text
  const res = Papa.parse<string[]>(body, { delimiter: DELIMITER[dialect.separator], newline: '\n', skipEmptyLines: false })
  return res.data
}

/** True when the row is numbers (or empty cells) in at least two fields, some of them numbers. */
function numericRow(fields: readonly string[], decimal: '.' | ','): boolean {
  let numbers = 0
  let width = fields.length
  while (width > 0 && fields[width - 1].trim() === '') width--
  if (width < 2) return false
  for (let i = 0; i < width; i++) {
    const v = cellNumber(fields[i], decimal)
    if (v === undefined) return false
    if (v !== null) numbers++
  }
  return numbers >= 2
}

/** The dialect whose reading gives the longest run of numeric rows with the most columns, and where the run starts. */
function detectDialect(text: string): { dialect: Dialect; start: number; width: number; head: string[][] } | null {
  let best: { dialect: Dialect; start: number; width: number; score: number; head: string[][] } | null = null
  // the first 400 lines decide (papaparse would split the whole text even for a preview)
  let cut = -1
  for (let i = 0; i < 400 && (cut = text.indexOf('\n', cut + 1)) >= 0; i++);
  const head = cut < 0 ? text : text.slice(0, cut)
  for (const dialect of DIALECTS) {
    const rows = splitLines(head, dialect)
    let runStart = -1
    let run = 0
    for (let i = 0; i <= rows.length; i++) {
      const ok = i < rows.length && numericRow(rows[i], dialect.decimal)
      if (ok) {
        if (run === 0) runStart = i
        run++
        continue
      }
      if (run > 0) {
        const width = trimmedWidth(rows[runStart])
        const score = run * 1000 + width
        if (!best || score > best.score) best = { dialect, start: runStart, width, score, head: rows }
      }
      run = 0
    }
  }
  return best && best.width >= 2 ? best : null
}

function trimmedWidth(fields: readonly string[]): number {
  let width = fields.length
  while (width > 0 && fields[width - 1].trim() === '') width--
  return width
}

// ---------------------------------------------------------------------------------------------------------------
// header labels

interface LabelReading {
  quantity?: SpectrumQuantity
  unit?: string
  /** True when the unit was written (nm, %, eV …). */
  unitWritten: boolean
}

/** The unit written in a label: `(nm)`, `[nm]`, `/eV`, `in nm`, `%T`, `R%`, `cm-1`, or a bare unit label. */
function unitOfLabel(label: string): string | undefined {
  const l = label.toLowerCase().replace(/\s+/g, ' ').trim()
  if (/%|percent/.test(l)) return '%'
  if (/cm\s*(?:-1|\^-1|⁻¹|\^\(-1\))|1\s*\/\s*cm|\/cm\b/.test(l)) return '1/cm'
  if (/m\s*(?:-1|\^-1|⁻¹)|1\s*\/\s*m\b/.test(l)) return '1/m'
  if (/(?:^|[\s([/])nm(?:$|[\s)\]])/.test(l) || l === 'nm') return 'nm'
  if (/(?:^|[\s([/])(?:µm|μm|um|micron|microns)(?:$|[\s)\]])/.test(l)) return 'µm'
  if (/(?:^|[\s([/])ev(?:$|[\s)\]])/.test(l)) return 'eV'
  if (/\((?:a\.?u\.?|arb\.?|-|1|fraction)\)|\[(?:a\.?u\.?|-|1|fraction)\]|fraction/.test(l)) return ''
  return undefined
}

/** Quantity and unit read from a header label, as far as it says them. */
export function readLabel(label: string): LabelReading {
  const raw = label.trim()
  const l = raw.toLowerCase().replace(/\s+/g, ' ')
  const unit = unitOfLabel(raw)
  const word = l.replace(/\(.*?\)|\[.*?\]|\/.*$|%/g, ' ').replace(/\s+/g, ' ').trim()
  let quantity: SpectrumQuantity | undefined
  if (/wave ?length|lambda|λ|^wl$|^wavel/.test(l)) quantity = 'wavelength'
  else if (/wave ?number/.test(l)) quantity = 'wavenumber'
  else if (/energy|^e$|^hν$|^hv$|photon/.test(word) || /^e\b/.test(word)) quantity = 'energy'
  else if (/absorptance|absorptivity|^a_?abs$/.test(word)) quantity = 'A'
  else if (/alpha|^α|absorption coeff|abs\.? coeff/.test(l)) quantity = 'alpha'
  else if (/absorbance|^abs\b|^abs\.|optical density|^od$|^a10$|^a$/.test(word)) quantity = 'A10'
  else if (/transmi|^%?t$|^t\b|^tt$|^t_?\w*$/.test(word) || /^%t|^t ?%/.test(l)) quantity = 'T'
  else if (/reflect|^%?r$|^r\b|^r_?\w*$/.test(word) || /^%r|^r ?%/.test(l)) quantity = 'R'
  else if (/refractive|^n$/.test(word)) quantity = 'n'
  else if (/extinction|^k$|^kappa$/.test(word)) quantity = 'k'
  else if (unit === 'nm' || unit === 'µm') quantity = 'wavelength'
  else if (unit === 'eV') quantity = 'energy'
  else if (unit === '1/cm') quantity = /^(?:cm|1\/cm)/.test(word) || word === '' ? 'wavenumber' : undefined
  return { quantity, unit, unitWritten: unit !== undefined }
}

// ---------------------------------------------------------------------------------------------------------------
// parse

function rangeOf(values: Float64Array, count: number): { min: number; max: number } {
  let min = Infinity
  let max = -Infinity
  for (let i = 0; i < count; i++) {
    const v = values[i]
    if (v < min) min = v
    if (v > max) max = v
  }
  return Number.isFinite(min) ? { min, max } : { min: NaN, max: NaN }
}

function fmt(x: number): string {
  return Number.isFinite(x) ? String(+x.toPrecision(6)) : String(x)
}

/** The quantity and unit of a column whose header says nothing (or not everything), from its values and place. */
function guessColumn(reading: LabelReading, position: number, xFound: boolean, min: number, max: number): { quantity: SpectrumQuantity; unit: string; guessed: boolean; note: string } {
  let quantity = reading.quantity
  let unit = reading.unit
  const notes: string[] = []
  if (!quantity) {
    if (!xFound && position === 0) {
      if (unit === 'eV' || (min >= 0.1 && max <= 20)) quantity = 'energy'
      else if (min >= 100 && max <= 4000) quantity = 'wavelength'
      else if (min >= 0.1 && max <= 40) quantity = 'wavelength'
      else if (min >= 200 && max <= 100000) quantity = 'wavenumber'
      else quantity = 'other'
      notes.push(`first column, values ${fmt(min)} to ${fmt(max)}: read as ${quantity}`)
    } else if (unit === '%' || (min >= -1 && max <= 101)) {
      quantity = 'T'
      notes.push(`values ${fmt(min)} to ${fmt(max)}: read as transmittance`)
    } else {
      quantity = 'other'
      notes.push('no quantity recognised in the header')
    }
  }
  if (unit === undefined) {
    const units = UNITS_OF[quantity]
    if (quantity === 'wavelength') unit = max <= 40 ? 'µm' : 'nm'
    else if (quantity === 'T' || quantity === 'R' || quantity === 'A') unit = max > 1.5 ? '%' : ''
    else unit = units[0]
    if (quantity !== 'other' && quantity !== 'n' && quantity !== 'k' && quantity !== 'A10')
      notes.push(`no unit in the header: ${unit === '' ? 'a fraction' : unit}${quantity === 'T' || quantity === 'R' || quantity === 'A' ? ` (largest value ${fmt(max)})` : ''}`)
  }
  const guessed = notes.length > 0
  return { quantity, unit, guessed, note: guessed ? notes.join('; ') : 'from the header' }
}

interface NumericBlock {
  /** Rows of the block, blank rows inside it included (a footer after a blank line is not). */
  nRows: number
  /** Each column's numbers by row (NaN where empty). */
  values: Float64Array[]
  /** Per column, the last row with a number (-1 for none). */
  lastWritten: Int32Array
  /** Text in a numeric column, or a row longer than the block (at most 20, in file order). */
  issues: FileIssue[]
  /** Rows shorter than the block (a broken file unless the samples are x/y pairs of different lengths). */
  short: FileIssue[]
}

/** Rows papaparse hands over at a time while the block is read (bounds the split strings held at once). */
const BLOCK_CHUNK_CHARS = 1 << 20

/**
 * Reads the numbers from row `start` to the end of the file, as papaparse splits them chunk by chunk: every cell goes
 * straight into its column, so the split rows of a large file are never all held at once. The block runs to the end
 * of the file; blank lines at its end, or a footer after a blank line (lines up to the end with no numeric row), are
 * left out. Throws for more than `maxNumbers` numbers.
 */
function readBlock(text: string, dialect: Dialect, start: number, width: number, labels: readonly string[], maxNumbers: number): NumericBlock {
  const decimal = dialect.decimal
  const maxRows = Math.floor(maxNumbers / width)
  let lines = 1
  for (let p = text.indexOf('\n'); p >= 0; p = text.indexOf('\n', p + 1)) lines++
  const capacity = Math.max(0, Math.min(lines - start, maxRows))
  const values: Float64Array[] = Array.from({ length: width }, () => new Float64Array(capacity).fill(NaN))
  const lastWritten = new Int32Array(width).fill(-1)
  const issues: FileIssue[] = []
  const short: FileIssue[] = []
  let tooMany = false

  /** Reads file row `i` (0-based) of the block into the columns. */
  const take = (fields: readonly string[], i: number): void => {
    const r = i - start
    if (r >= maxRows) {
      tooMany = true
      return
    }
    if (issues.length >= 20) return
    const line = i + 1
    let w = fields.length
    while (w > width && fields[w - 1].trim() === '') w--
    if (w === 0 || (w === 1 && fields[0].trim() === '')) return
    if (w > width) {
      issues.push({ line, column: width + 1, message: `${w} values on this line; the rows above have ${width}` })
      return
    }
    if (w < width && short.length < 20) short.push({ line, column: w + 1, message: `${w} value${w === 1 ? '' : 's'} on this line; the rows above have ${width}` })
    for (let c = 0; c < w; c++) {
      const raw = fields[c]
      // fast path: a finite non-zero number not starting with 0 or a space (so not '', '0x1f', ' 0b1' either);
      // everything else is checked against the decimal pattern
      const f = +raw
      const c0 = raw.charCodeAt(0)
      const v: number | null | undefined = decimal === '.' && f - f === 0 && f !== 0 && c0 !== 48 && c0 !== 32 && c0 !== 9 ? f : cellNumber(raw, decimal)
      if (v === undefined) {
        issues.push({ line, column: c + 1, message: `"${raw.trim().slice(0, 40)}" is not a number${labels[c] ? ` (column ${labels[c]})` : ''}` })
        return
      }
      if (v !== null) {
        values[c][r] = v
        lastWritten[c] = r
      }
    }
  }

  let row = 0
  // rows from a blank line on, held until a numeric row shows they are not the footer
  let held: string[][] = []
  let heldFrom = -1
  const body = dialect.separator === 'whitespace' ? whitespaceToTabs(text) : text
  // papaparse streams a string in chunks of `chunkSize` characters, synchronously (its StringStreamer); the typings
  // list `chunk` for files only, hence the widened config
  const config: Papa.ParseConfig<string[]> & { chunkSize: number; chunk: (res: Papa.ParseResult<string[]>, parser: Papa.Parser) => void } = {
    delimiter: DELIMITER[dialect.separator],
    newline: '\n',
    skipEmptyLines: false,
    chunkSize: BLOCK_CHUNK_CHARS,
    chunk: (res, parser) => {
      for (const fields of res.data) {
        const i = row++
        if (i < start) continue
        if (heldFrom >= 0) {
          if (trimmedWidth(fields) > 0 && numericRow(fields, decimal)) {
            held.forEach((h, k) => take(h, heldFrom + k))
            held = []
            heldFrom = -1
            take(fields, i)
          } else held.push(fields)
        } else if (trimmedWidth(fields) === 0) {
          heldFrom = i
          held = [fields]
        } else take(fields, i)
        if (tooMany) {
          parser.abort()
          return
        }
      }
    },
  }
  Papa.parse<string[]>(body, config)
  if (tooMany) {
    // the lines from the first row of numbers to the last non-blank line
    let lastLines = 1
    const trimmed = text.trimEnd()
    for (let p = trimmed.indexOf('\n'); p >= 0; p = trimmed.indexOf('\n', p + 1)) lastLines++
    const about = Math.max(lastLines - start, maxRows + 1)
    throw new SpectrumFileError(
      `The file holds about ${(about * width).toLocaleString('en-US')} numbers (${about.toLocaleString('en-US')} rows × ${width} columns); one import takes at most ${maxNumbers.toLocaleString('en-US')}. Split the file or thin the data first.`,
      [{ line: start + 1, message: 'too many numbers' }],
    )
  }
  const nRows = (heldFrom >= 0 ? heldFrom : row) - start
  return { nRows, values: nRows === capacity ? values : values.map((v) => v.subarray(0, nRows)), lastWritten, issues, short }
}

/**
 * Reads a file's text (or bytes) into columns and samples. Throws SpectrumFileError for a file that has no numeric
 * block, a single column, text in a numeric column, ragged rows or more than MAX_IMPORT_NUMBERS numbers.
 */
export function parseSpectrumFile(input: Uint8Array | string, options: { maxNumbers?: number } = {}): ParsedSpectrumFile {
  const maxNumbers = options.maxNumbers ?? MAX_IMPORT_NUMBERS
  const decoded = typeof input === 'string' ? { text: input.replace(/^\uFEFF/, ''), encoding: 'text' } : decodeText(input)
  // lines split at \n; a CR before it is whitespace to every cell read (CR-only files are rewritten first)
  const text = decoded.text.includes('\n') ? decoded.text : decoded.text.replace(/\r/g, '\n')
  if (text.trim() === '') throw new SpectrumFileError('The file is empty.', [{ message: 'no text in the file' }])
  const found = detectDialect(text)
  if (!found) {
    const single = text.split('\n').findIndex((l) => cellNumber(l, '.') !== undefined && cellNumber(l, '.') !== null)
    if (single >= 0)
      throw new SpectrumFileError(
        'The file has a single column of numbers; a spectrum needs at least two (an x column such as wavelength, and a measured column).',
        [{ line: single + 1, message: 'only one number on the line' }],
      )
    throw new SpectrumFileError(
      'No block of numbers was found: expected rows of at least two numbers separated by commas, semicolons, tabs or spaces.',
      [{ message: 'no numeric rows' }],
    )
  }
  const { dialect } = found
  // the first lines, as the chosen dialect splits them: the numbers start there, and the header is above them
  const head = found.head
  let start = found.start
  // a row with a bad cell splits the run of numbers: rows above it that start with a number belong to the data too
  // (so the bad cell is reported, not taken for a header)
  while (start > 0 && trimmedWidth(head[start - 1]) >= 2 && typeof cellNumber(head[start - 1][0], dialect.decimal) === 'number') start--
  // the header row: the last non-empty line above the numbers with as many fields as the numbers have
  let headerLine: number | undefined
  let labels: string[] = []
  for (let i = start - 1; i >= 0; i--) {
    const w = trimmedWidth(head[i])
    if (w === 0) continue
    if (w >= found.width - 1 && w <= found.width + 1 && w >= 2) {
      headerLine = i
      labels = head[i].slice(0, found.width).map((s) => s.trim().replace(/^"|"$/g, ''))
    }
    break
  }
  const width = found.width
  const { nRows, values, lastWritten, issues, short } = readBlock(text, dialect, start, width, labels, maxNumbers)
  if (issues.length) {
    const first = issues[0]
    const ragged = first.message.includes('values on this line')
    throw new SpectrumFileError(
      ragged
        ? `Line ${first.line} has more values than the rows above it (${width}); every row of the data must have the same columns.`
        : `Line ${first.line}, column ${first.column}: ${first.message}. The numbers start on line ${start + 1}; text is allowed only above them.`,
      issues,
    )
  }
  // rows shorter than the block (ragged) when every column is an x/y of one sample are caught when mapping
  const columns: ImportColumn[] = []
  const byKey = new Map<string, Float64Array>()
  let xFound = false
  for (let c = 0; c < width; c++) {
    const count = lastWritten[c] + 1
    const { min, max } = rangeOf(values[c], count)
    const label = labels[c] && labels[c].length ? labels[c] : `column ${c + 1}`
    const reading = labels[c] ? readLabel(labels[c]) : { unitWritten: false }
    const g = guessColumn(reading, c, xFound, min, max)
    if (X_QUANTITIES.has(g.quantity)) xFound = true
    const key = `c${c + 1}`
    columns.push({ key, label, quantity: g.quantity, unit: g.unit, guessed: g.guessed, note: g.note, count, min, max })
    byKey.set(key, count === nRows ? values[c] : values[c].subarray(0, count))
  }
  if (columns.filter((c) => c.count > 0).length < 2)
    throw new SpectrumFileError('The file has a single column of numbers; a spectrum needs at least two.', [{ line: start + 1, message: 'one column' }])
  // a row of sample names above the header ("film A,,film B,") names the samples of x/y pairs
  const nameRow = headerLine !== undefined && headerLine > 0 ? head[headerLine - 1].map((t) => t.trim()) : []
  const samples = groupSamples(columns, labels, trimmedWidth(nameRow) >= 2 ? nameRow : [])
  // x/y pairs of different lengths leave later rows short; with one x column a short row is a broken file
  if (short.length && samples.every((s) => s.columns[0] === samples[0].columns[0]))
    throw new SpectrumFileError(
      `Line ${short[0].line} has fewer values than the rows above it (${width}); every row of the data must have the same columns.`,
      short,
    )
  const warnings: string[] = []
  if (headerLine === undefined) warnings.push('The file has no header row: every column\'s quantity and unit are guesses; check them.')
  const preview: (number | null)[][] = []
  for (let r = 0; r < Math.min(PREVIEW_ROWS, nRows); r++) preview.push(values.map((col) => (Number.isNaN(col[r]) ? null : col[r])))
  return {
    columns,
    samples,
    rows: preview,
    warnings,
    dialect: { separator: dialect.separator, decimal: dialect.decimal, encoding: decoded.encoding, firstLine: start + 1, headerLine: headerLine === undefined ? undefined : headerLine + 1 },
    values: byKey,
  }
}

/**
 * Samples of a file: repeated x columns (x/y pairs) start a sample each; one x column with several measured columns
 * of the same quantity (T of film A, T of film B) gives one sample per measured column; otherwise the whole file is
 * one sample (wavelength, T, R of one film).
 */
function groupSamples(columns: readonly ImportColumn[], labels: readonly string[], nameRow: readonly string[]): ImportSample[] {
  const xs = columns.filter((c) => X_QUANTITIES.has(c.quantity))
  const nameOf = (c: ImportColumn, i: number) => {
    const l = labels[columns.indexOf(c)]
    const stripped = l ? l.replace(/\(.*?\)|\[.*?\]|%|\/.*$/g, ' ').replace(/\b(?:t|r|abs|transmittance|reflectance|absorbance)\b/gi, ' ').replace(/\s+/g, ' ').trim() : ''
    return stripped || `sample ${i + 1}`
  }
  if (xs.length > 1) {
    const out: ImportSample[] = []
    let current: ImportSample | null = null
    for (const c of columns) {
      if (X_QUANTITIES.has(c.quantity)) {
        current = { key: `s${out.length + 1}`, name: '', columns: [c.key] }
        out.push(current)
      } else if (current) current.columns.push(c.key)
    }
    for (const [i, s] of out.entries()) {
      const at = columns.findIndex((c) => c.key === s.columns[0])
      const y = columns.find((c) => c.key === s.columns[1])
      s.name = nameRow[at] || nameRow[at + 1] || (y ? nameOf(y, i) : `sample ${i + 1}`)
    }
    return out
  }
  const x = xs[0] ?? columns[0]
  const ys = columns.filter((c) => c !== x)
  const quantities = new Set(ys.map((c) => c.quantity))
  if (ys.length > 1 && quantities.size === 1)
    return ys.map((y, i) => ({ key: `s${i + 1}`, name: nameOf(y, i), columns: [x.key, y.key] }))
  return [{ key: 's1', name: 'all columns', columns: [x.key, ...ys.map((c) => c.key)] }]
}

// ---------------------------------------------------------------------------------------------------------------
// mapping

const COLUMN_NAME: Record<SpectrumQuantity, string> = {
  wavelength: 'wavelength', energy: 'energy', wavenumber: 'wavenumber', T: 'T', R: 'R', A: 'A', A10: 'A10', alpha: 'alpha', n: 'n', k: 'k', other: 'col',
}

/** A name formulas can use, made from free text: `Film B 2024-03` → `Film_B_2024_03`; `2024 run` → `s_2024_run`. */
export function identifierFrom(text: string, fallback: string): string {
  const cleaned = text.normalize('NFKD').replace(/[^A-Za-z0-9_]+/g, '_').replace(/^_+|_+$/g, '').slice(0, 40)
  if (IDENTIFIER.test(cleaned)) return cleaned
  return /^[0-9]/.test(cleaned) && IDENTIFIER.test(`s_${cleaned}`) ? `s_${cleaned}` : fallback
}

/** A spectrum's name from its file's name, without the extension. */
export function nameFromFile(fileName: string): string {
  return identifierFrom(fileName.replace(/\.[A-Za-z0-9]{1,5}$/, ''), 'spectrum')
}

/**
 * The columns of one sample, named, typed, sorted by x and checked: the result of a confirmed mapping. Throws
 * SpectrumFileError for empty cells (unless dropEmptyRows), duplicate x (unless averageDuplicates), columns of
 * different lengths, or an unknown sample or column.
 */
export function mapSpectrum(file: ParsedSpectrumFile, options: MappingOptions = {}): MappedSpectrum {
  const firstLine = file.dialect.firstLine
  const sample = options.sample === undefined
    ? file.samples[0]
    : file.samples.find((s) => s.key === options.sample || s.name === options.sample)
  if (!sample)
    throw new SpectrumFileError(`The file has no sample "${options.sample}"; it has ${file.samples.map((s) => `"${s.name}"`).join(', ')}.`, [{ message: 'unknown sample' }])
  const chosen: NonNullable<MappingOptions['columns']> = options.columns?.length ? options.columns : sample.columns.map((key) => ({ key }))
  const taken: { col: ImportColumn; name: string; quantity: SpectrumQuantity; unit: string; values: Float64Array }[] = []
  const names = new Set<string>()
  for (const pick of chosen) {
    const col = file.columns.find((c) => c.key === pick.key)
    if (!col) throw new SpectrumFileError(`The file has no column "${pick.key}".`, [{ message: `unknown column ${pick.key}` }])
    const quantity = pick.quantity ?? col.quantity
    let name = pick.name ?? (quantity === 'other' ? identifierFrom(col.label, `col${col.key.slice(1)}`) : COLUMN_NAME[quantity])
    if (!IDENTIFIER.test(name))
      throw new SpectrumFileError(`The column name "${name}" cannot be used in formulas: start with a letter and use only letters, digits and _.`, [{ column: Number(col.key.slice(1)), message: 'invalid column name' }])
    if (pick.name === undefined) {
      const base = name
      for (let i = 2; names.has(name); i++) name = `${base}_${i}`
    } else if (names.has(name)) throw new SpectrumFileError(`Two columns are both named "${name}"; give each its own name.`, [{ column: Number(col.key.slice(1)), message: 'duplicate column name' }])
    names.add(name)
    taken.push({ col, name, quantity, unit: pick.unit ?? (pick.quantity && pick.quantity !== col.quantity ? UNITS_OF[pick.quantity][0] : col.unit), values: file.values.get(col.key)! })
  }
  if (taken.length < 2) throw new SpectrumFileError('Choose at least two columns: an x column and a measured one.', [{ message: 'one column chosen' }])
  const warnings: string[] = []
  const length = Math.max(...taken.map((t) => t.values.length))
  // empty cells (including a column that ends early); most files have none, so look before building a row mask
  const holes = taken.some((t) => t.values.length < length || t.values.some(Number.isNaN))
  const keep = holes ? new Uint8Array(length).fill(1) : null
  const emptyIssues: FileIssue[] = []
  let dropped = 0
  if (keep) {
    for (let r = 0; r < length; r++) {
      for (const t of taken) {
        if (r < t.values.length && !Number.isNaN(t.values[r])) continue
        if (emptyIssues.length < 20) emptyIssues.push({ line: firstLine + r, column: Number(t.col.key.slice(1)), message: `empty or not a number (${t.col.label})` })
        keep[r] = 0
      }
      if (!keep[r]) dropped++
    }
  }
  if (dropped && !options.dropEmptyRows) {
    const first = emptyIssues[0]
    throw new SpectrumFileError(
      `Line ${first.line}, column ${first.column} is empty or not a number (${dropped} row${dropped === 1 ? '' : 's'} like this). Drop those rows, or fix the file.`,
      emptyIssues,
      'dropEmptyRows',
    )
  }
  let columns = taken.map((t) => {
    if (!keep || !dropped) return t.values
    const out = new Float64Array(length - dropped)
    let j = 0
    for (let r = 0; r < length; r++) if (keep[r]) out[j++] = t.values[r]
    return out
  })
  /** The file line of the kept row `r` (before sorting). */
  let keptLines: Int32Array | null = null
  const lineOf = (r: number): number => {
    if (!keep || !dropped) return firstLine + r
    if (!keptLines) {
      keptLines = new Int32Array(length - dropped)
      let j = 0
      for (let q = 0; q < length; q++) if (keep[q]) keptLines[j++] = firstLine + q
    }
    return keptLines[r]
  }
  if (dropped) warnings.push(`Dropped ${dropped} row${dropped === 1 ? '' : 's'} with an empty or NaN cell (first: line ${emptyIssues[0].line}).`)
  if (columns[0].length === 0) throw new SpectrumFileError('No rows are left once the rows with empty cells are dropped.', [{ message: 'no rows' }])
  // sort by x (the first taken column of an x quantity, else the first)
  const xi = Math.max(0, taken.findIndex((t) => X_QUANTITIES.has(t.quantity)))
  const x = columns[xi]
  const n = x.length
  let ascending = true
  let descending = true
  for (let i = 1; i < n && (ascending || descending); i++) {
    if (!(x[i] > x[i - 1])) ascending = false
    if (!(x[i] < x[i - 1])) descending = false
  }
  /** Sorted row → row before sorting (identity when x already ascends). */
  let from: (i: number) => number = (i) => i
  if (!ascending) {
    if (descending) {
      from = (i) => n - 1 - i
      columns = columns.map((c) => c.slice().reverse())
      warnings.push(`The ${taken[xi].name} column was descending (${fmt(x[0])} to ${fmt(x[n - 1])}); the rows were reversed so it ascends.`)
    } else {
      const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => x[a] - x[b] || a - b)
      from = (i) => order[i]
      const dupes = order.some((v, i) => i > 0 && x[v] === x[order[i - 1]])
      if (!dupes) warnings.push(`The ${taken[xi].name} column was not in order; the rows were sorted by it.`)
      else warnings.push(`The rows were sorted by ${taken[xi].name}.`)
      columns = columns.map((c) => {
        const out = new Float64Array(n)
        for (let i = 0; i < n; i++) out[i] = c[order[i]]
        return out
      })
    }
  }
  // duplicate x
  const xs = columns[xi]
  const dupIssues: FileIssue[] = []
  let dupCount = 0
  for (let i = 1; i < n; i++) {
    if (xs[i] !== xs[i - 1]) continue
    dupCount++
    if (dupIssues.length < 20) {
      const a = lineOf(from(i - 1))
      const b = lineOf(from(i))
      dupIssues.push({ line: Math.max(a, b), column: Number(taken[xi].col.key.slice(1)), message: `${taken[xi].name} ${fmt(xs[i])} also on line ${Math.min(a, b)}` })
    }
  }
  if (dupCount) {
    if (!options.averageDuplicates) {
      const first = dupIssues[0]
      throw new SpectrumFileError(
        `Line ${first.line}, column ${first.column}: the ${first.message} (${dupCount} repeated value${dupCount === 1 ? '' : 's'}). Average the rows that share a value, or fix the file.`,
        dupIssues,
        'averageDuplicates',
      )
    }
    const out = columns.map(() => [] as number[])
    for (let i = 0; i < n; ) {
      let j = i
      while (j + 1 < n && xs[j + 1] === xs[i]) j++
      columns.forEach((c, k) => {
        let s = 0
        for (let q = i; q <= j; q++) s += c[q]
        out[k].push(s / (j - i + 1))
      })
      i = j + 1
    }
    columns = out.map((c) => Float64Array.from(c))
    warnings.push(`Averaged ${dupCount} repeated ${taken[xi].name} value${dupCount === 1 ? '' : 's'} (${n} rows became ${columns[0].length}).`)
  }
  return {
    sample: sample.name,
    columns: taken.map((t, i) => ({ name: t.name, quantity: t.quantity, unit: t.unit, values: columns[i] })),
    warnings,
  }
}

/** Parse and map in one call (the upload route, the bench). */
export function importSpectrum(input: Uint8Array | string, options: MappingOptions & { maxNumbers?: number } = {}): { file: ParsedSpectrumFile; spectrum: MappedSpectrum } {
  const file = parseSpectrumFile(input, options)
  return { file, spectrum: mapSpectrum(file, options) }
}
