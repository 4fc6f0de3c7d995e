/**
 * Published reference data for the physics tests. It lives outside the project, in `<repo>/../shared/data/`, and is
 * never copied into the repository; tests that need it skip, saying why, when it is absent.
 */
import { existsSync, readFileSync } from 'node:fs'
import path from 'node:path'

/** `<repo>/../shared/data` */
export const referenceDataDir = path.resolve(__dirname, '../../../shared/data')

/** ASTM G173-03 reference solar spectra, in the file's own units (nm and W m⁻² nm⁻¹), one array per column. */
export interface AstmG173 {
  wavelengthNm: Float64Array
  /** Extraterrestrial (AM0). */
  extraterrestrial: Float64Array
  /** Global tilt, 37° (AM1.5G). */
  global: Float64Array
  /** Direct + circumsolar (AM1.5D). */
  direct: Float64Array
}

export type Loaded<T> = { ok: true; data: T } | { ok: false; reason: string }

let astmCache: Loaded<AstmG173> | undefined

/**
 * Reads `astm-g173-03.csv`: 2 header lines, then rows `wavelength, Etr, Global tilt, Direct+circumsolar`.
 * Answers `{ ok: false, reason }` when the file is missing or malformed, so a test can `describe.skip` with that reason.
 */
export function loadAstmG173(): Loaded<AstmG173> {
  if (astmCache) return astmCache
  const file = path.join(referenceDataDir, 'astm-g173-03.csv')
  if (!existsSync(file)) {
    astmCache = { ok: false, reason: `reference spectrum not found at ${file} (published ASTM G173-03 data is kept outside the repository)` }
    return astmCache
  }
  const lines = readFileSync(file, 'utf8').split(/\r?\n/).slice(2).filter((l) => l.trim() !== '')
  const cols = [0, 1, 2, 3].map(() => new Float64Array(lines.length))
  for (let i = 0; i < lines.length; i++) {
    const parts = lines[i].split(',').map(Number)
    if (parts.length < 4 || parts.some((v) => !Number.isFinite(v))) {
      astmCache = { ok: false, reason: `${file} line ${i + 3} is not four numbers: "${lines[i]}"` }
      return astmCache
    }
    for (let c = 0; c < 4; c++) cols[c][i] = parts[c]
  }
  astmCache = { ok: true, data: { wavelengthNm: cols[0], extraterrestrial: cols[1], global: cols[2], direct: cols[3] } }
  return astmCache
}

/** A SI view of one ASTM column: wavelengths in m and spectral irradiance in W m⁻² per metre of wavelength. */
export function astmSI(data: AstmG173, column: 'extraterrestrial' | 'global' | 'direct'): { lambda: Float64Array; irradiance: Float64Array } {
  return {
    lambda: data.wavelengthNm.map((v) => v * 1e-9),
    irradiance: data[column].map((v) => v * 1e9),
  }
}
