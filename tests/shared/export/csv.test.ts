import { describe, it, expect } from 'vitest'
import { csvField, csvHeader, csvRows, toCsv } from '../../../shared/export/csv'

// The expected texts follow RFC 4180 (comma-separated, CRLF line ends, fields with commas, quotes or line breaks
// quoted and inner quotes doubled) and JavaScript's shortest round-trip number form (ECMAScript Number::toString).
describe('the CSV writer', () => {
  it('csvField writes numbers at full precision and leaves missing or non-finite ones empty', () => {
    expect(csvField(0.1 + 0.2)).toBe('0.30000000000000004')
    expect(Number(csvField(6.62607015e-34))).toBe(6.62607015e-34)
    expect(csvField(1e21)).toBe('1e+21')
    expect([NaN, Infinity, -Infinity, null, undefined].map(csvField)).toEqual(['', '', '', '', ''])
  })

  it('csvField quotes text with a comma, a quote or a line break, doubling inner quotes, and leaves other text alone', () => {
    expect(csvField('alpha (1/cm)')).toBe('alpha (1/cm)')
    expect(csvField('measured, film B')).toBe('"measured, film B"')
    expect(csvField('the "annealed" film')).toBe('"the ""annealed"" film"')
    expect(csvField('two\nlines')).toBe('"two\nlines"')
    expect(csvField('1,5')).toBe('"1,5"')
  })

  it('csvHeader puts the unit in brackets after the name, and leaves a plain number bare', () => {
    expect(csvHeader('alpha', '1/cm')).toBe('alpha (1/cm)')
    expect(csvHeader('A', undefined)).toBe('A')
    expect(csvHeader('A', '')).toBe('A')
  })

  it('csvRows ends every row, the last one included, with CRLF', () => {
    expect(csvRows([['x', 'y'], [1, 2]])).toBe('x,y\r\n1,2\r\n')
  })

  it('toCsv writes columns under their headers and ends a shorter column in empty fields', () => {
    const csv = toCsv([
      { header: csvHeader('lam', 'nm'), values: [400, 500, 600] },
      { header: csvHeader('film.T', '%'), values: [12.5, null, 40] },
      { header: 'note, short', values: [1] },
    ])
    expect(csv).toBe('lam (nm),film.T (%),"note, short"\r\n400,12.5,1\r\n500,,\r\n600,40,\r\n')
  })
})
