/** Number formatting for labels on figures. */

/**
 * A number with `digits` significant figures, without trailing zeros, in exponent form outside 1e-3…1e5.
 * Example: formatNumber(837.7301) → "837.7"; formatNumber(0.000012) → "1.2e-5".
 */
export function formatNumber(x: number, digits = 4): string {
  if (!Number.isFinite(x)) return String(x)
  if (x === 0) return '0'
  const a = Math.abs(x)
  if (a >= 1e5 || a < 1e-3) {
    const [m, e] = x.toExponential(digits - 1).split('e')
    return `${trimZeros(m)}e${e.replace('+', '')}`
  }
  const p = x.toPrecision(digits)
  // toPrecision writes 12345 as "1.235e+4" when digits < 5: keep plain integers below 1e5
  return p.includes('e') ? String(Math.round(x)) : trimZeros(p)
}

function trimZeros(s: string): string {
  return s.includes('.') ? s.replace(/0+$/, '').replace(/\.$/, '') : s
}

/**
 * A value with its standard error, rounded so the error has two significant figures.
 * Example: formatWithError(1.48137, 0.00213) → "1.4814 ± 0.0021".
 */
export function formatWithError(x: number, err: number | undefined): string {
  if (err === undefined || !Number.isFinite(err) || err <= 0) return formatNumber(x)
  const decimals = Math.max(0, 1 - Math.floor(Math.log10(err)))
  if (decimals > 10 || Math.abs(x) >= 1e5) return `${formatNumber(x)} ± ${formatNumber(err, 2)}`
  return `${x.toFixed(decimals)} ± ${err.toFixed(decimals)}`
}
