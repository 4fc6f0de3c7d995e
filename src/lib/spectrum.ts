/**
 * Colours of the visible spectrum, for the brand strip and for shading the visible band on wavelength axes.
 *
 * `wavelengthToRgb(nm)` maps a vacuum wavelength in nanometres (380–780; outside that range it returns black) to an
 * approximate display colour. It is the piecewise-linear approximation widely used for spectrum pictures (common
 * practice; attributed to D. Bruton, "Approximate RGB values for visible wavelengths", 1996 — recalled from memory):
 * linear ramps between 440, 490, 510, 580 and 645 nm, an intensity roll-off below 420 nm and above 700 nm where the
 * eye's sensitivity falls, and a display gamma of 0.8. It is a picture, not colorimetry.
 *
 * Example: `wavelengthToRgb(550)` → `[163, 255, 0]` (green-yellow).
 */
export function wavelengthToRgb(nm: number): [number, number, number] {
  let r = 0
  let g = 0
  let b = 0
  if (nm >= 380 && nm < 440) {
    r = -(nm - 440) / (440 - 380)
    b = 1
  } else if (nm >= 440 && nm < 490) {
    g = (nm - 440) / (490 - 440)
    b = 1
  } else if (nm >= 490 && nm < 510) {
    g = 1
    b = -(nm - 510) / (510 - 490)
  } else if (nm >= 510 && nm < 580) {
    r = (nm - 510) / (580 - 510)
    g = 1
  } else if (nm >= 580 && nm < 645) {
    r = 1
    g = -(nm - 645) / (645 - 580)
  } else if (nm >= 645 && nm <= 780) {
    r = 1
  }
  let factor = 0
  if (nm >= 380 && nm < 420) factor = 0.3 + (0.7 * (nm - 380)) / (420 - 380)
  else if (nm >= 420 && nm <= 700) factor = 1
  else if (nm > 700 && nm <= 780) factor = 0.3 + (0.7 * (780 - nm)) / (780 - 700)
  const gamma = 0.8
  const channel = (v: number) => (v <= 0 ? 0 : Math.round(255 * Math.pow(v * factor, gamma)))
  return [channel(r), channel(g), channel(b)]
}

/** A CSS `linear-gradient` through the spectrum from `fromNm` to `toNm` (default 380–750 nm), one stop every `stepNm`. */
export function spectrumGradient(fromNm = 380, toNm = 750, stepNm = 10, direction = 'to right'): string {
  const stops: string[] = []
  const span = toNm - fromNm
  for (let nm = fromNm; nm <= toNm + 1e-9; nm += stepNm) {
    const [r, g, b] = wavelengthToRgb(nm)
    stops.push(`rgb(${r} ${g} ${b}) ${(((nm - fromNm) / span) * 100).toFixed(2)}%`)
  }
  return `linear-gradient(${direction}, ${stops.join(', ')})`
}
