/**
 * The brand strip's colours: the visible spectrum 380–750 nm as a CSS gradient, with the same wavelength → colour
 * function the figures use to shade the visible band (shared/plot/visible.ts: CIE 1931 colour-matching functions
 * through sRGB), so the strip and every figure agree on what 600 nm looks like.
 */
import { VISIBLE_NM, wavelengthToRgb } from '../../shared/plot/visible'

export { wavelengthToRgb }

/** A CSS `linear-gradient` through the spectrum from `fromNm` to `toNm` (default 380–750 nm), one stop every `stepNm`. */
export function spectrumGradient(fromNm = VISIBLE_NM[0], toNm = VISIBLE_NM[1], stepNm = 10, direction = 'to right'): string {
  const stops: string[] = []
  const span = toNm - fromNm
  for (let nm = fromNm; nm <= toNm + 1e-9; nm += stepNm) {
    const [r, g, b] = wavelengthToRgb(Math.min(nm, toNm))
    stops.push(`rgb(${r} ${g} ${b}) ${(((nm - fromNm) / span) * 100).toFixed(2)}%`)
  }
  return `linear-gradient(${direction}, ${stops.join(', ')})`
}
