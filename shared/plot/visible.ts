/**
 * The visible band (380–750 nm) as coloured shading on spectral axes, from an approximate wavelength → sRGB colour.
 *
 * Colour: the CIE 1931 2° colour-matching functions from the multi-lobe Gaussian fit of Wyman, Sloan & Shirley,
 * "Simple Analytic Approximations to the CIE XYZ Color Matching Functions", JCGT 2(2), 1–11 (2013); XYZ → linear
 * sRGB with the IEC 61966-2-1:1999 (sRGB, D65) matrix and transfer curve. Monochromatic light lies outside the sRGB
 * gamut, so negative components are clipped and the colour scaled to full brightness, with a fade at both ends
 * of the band where the eye is weak (common practice for spectrum strips).
 */
import { converter } from './units'

/** Limits of the visible band used for shading, nm (a common choice; CIE tables run 360/380–780/830 nm). */
export const VISIBLE_NM: readonly [number, number] = [380, 750]

function lobe(lambda: number, mu: number, s1: number, s2: number): number {
  const t = (lambda - mu) / (lambda < mu ? s1 : s2)
  return Math.exp(-0.5 * t * t)
}

/**
 * CIE 1931 2° colour-matching functions x̄, ȳ, z̄ at a wavelength in nm (Wyman–Sloan–Shirley multi-lobe fit).
 * Valid 360–830 nm; ȳ(555 nm) ≈ 1.
 */
export function cieXyz(lambdaNm: number): [number, number, number] {
  const l = lambdaNm
  const x = 1.056 * lobe(l, 599.8, 37.9, 31.0) + 0.362 * lobe(l, 442.0, 16.0, 26.7) - 0.065 * lobe(l, 501.1, 20.4, 26.2)
  const y = 0.821 * lobe(l, 568.8, 46.9, 40.5) + 0.286 * lobe(l, 530.9, 16.3, 31.1)
  const z = 1.217 * lobe(l, 437.0, 11.8, 36.0) + 0.681 * lobe(l, 459.0, 26.0, 13.8)
  return [x, y, z]
}

/** CIE XYZ → linear sRGB (IEC 61966-2-1, D65 white); components may fall outside 0–1. */
export function xyzToLinearSrgb([x, y, z]: readonly [number, number, number]): [number, number, number] {
  return [3.2406 * x - 1.5372 * y - 0.4986 * z, -0.9689 * x + 1.8758 * y + 0.0415 * z, 0.0557 * x - 0.204 * y + 1.057 * z]
}

/** The sRGB transfer curve (IEC 61966-2-1): linear 0–1 → encoded 0–1. */
export function srgbEncode(v: number): number {
  const c = Math.min(1, Math.max(0, v))
  return c <= 0.0031308 ? 12.92 * c : 1.055 * c ** (1 / 2.4) - 0.055
}

/**
 * Display colour of monochromatic light, as 8-bit sRGB [r, g, b]. Outside 380–750 nm the result is black.
 * Example: 450 nm → a saturated blue (b highest), 580 nm → yellow (r ≈ g ≫ b), 650 nm → red.
 */
export function wavelengthToRgb(lambdaNm: number): [number, number, number] {
  const [lo, hi] = VISIBLE_NM
  if (!(lambdaNm >= lo && lambdaNm <= hi)) return [0, 0, 0]
  // The spectral locus barely changes chromaticity below ~410 nm and above ~645 nm, and there the fitted lobes'
  // ratios are least accurate; take the hue from the clamped wavelength and let the fade set the brightness.
  const hue = Math.min(645, Math.max(410, lambdaNm))
  const lin = xyzToLinearSrgb(cieXyz(hue)).map((v) => Math.max(0, v))
  const max = Math.max(...lin)
  const fade = lambdaNm < 420 ? 0.3 + (0.7 * (lambdaNm - lo)) / (420 - lo) : lambdaNm > 700 ? 0.3 + (0.7 * (hi - lambdaNm)) / (hi - 700) : 1
  return lin.map((v) => Math.round(255 * srgbEncode(max > 0 ? (v / max) * fade : 0))) as [number, number, number]
}

/** `rgb(r, g, b)` of `wavelengthToRgb`. */
export function wavelengthToCss(lambdaNm: number): string {
  const [r, g, b] = wavelengthToRgb(lambdaNm)
  return `rgb(${r}, ${g}, ${b})`
}

export interface BandSegment {
  /** Segment limits in the axis unit, from < to. */
  from: number
  to: number
  /** Colour at the segment's centre wavelength. */
  color: string
}

/**
 * The visible band cut into coloured segments in an axis unit (nm, um, eV, 1/cm, THz …), so it can be shaded on
 * wavelength and energy axes alike. Null when the unit is not a spectral unit.
 */
export function visibleBand(axisUnit: string | undefined, stepNm = 5): BandSegment[] | null {
  const conv = converter('nm', axisUnit)
  if (!conv.ok) return null
  const f = conv.value
  const [lo, hi] = VISIBLE_NM
  const out: BandSegment[] = []
  for (let a = lo; a < hi; a += stepNm) {
    const b = Math.min(hi, a + stepNm)
    const fa = f(a)
    const fb = f(b)
    if (!Number.isFinite(fa) || !Number.isFinite(fb)) return null
    out.push({ from: Math.min(fa, fb), to: Math.max(fa, fb), color: wavelengthToCss((a + b) / 2) })
  }
  return out
}
