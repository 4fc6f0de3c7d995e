/**
 * stack-10x2000: a 10-layer stack (alternating high- and low-index Cauchy layers, two of them absorbing) on a 1 mm
 * glass slide summed by intensity, unpolarised light at 30°, over 2,000 wavelengths, evaluated by the engine from a
 * sheet (every n, k and thickness a formula, the stack's outputs as JSON-ready arrays), against a hand-written loop
 * computing the same numbers: Cauchy indices by hand, the transfer-matrix kernel (solveTmmPoint) per wavelength and
 * polarisation both ways through the layers, the slide's multiple reflections summed in the loop. Target ≤ 1.5×.
 */
import { SheetEngine } from '../../shared/engine/index'
import { solveTmmPoint, tmmPoint } from '../../shared/optics/index'
import type { SheetCell } from '../../shared/schema/sheet'
import { measurePair, printBench, printTarget } from '../harness'

const N = 2000
const LAYERS = 10
const ANGLE = 30
/** Cauchy A, B (µm²) and k of the high (odd) and low (even) layers; thickness in nm (Halvorsen lab demo numbers). */
const high = { A: 2.2, B: 0.02, k: 0.01 }
const low = { A: 1.45, B: 0.004, k: 0 }
const thickness = (j: number): number => 60 + 7 * j

const cells: SheetCell[] = [
  { id: 'lam', kind: 'formula', name: 'lam', source: `grid(350*nm, 1100*nm, ${N})`, unit: 'nm' },
  { id: 'nH', kind: 'formula', name: 'nH', source: `cauchy_n(lam, ${high.A}, ${high.B}*um^2, 0)` },
  { id: 'nL', kind: 'formula', name: 'nL', source: `cauchy_n(lam, ${low.A}, ${low.B}*um^2, 0)` },
  {
    id: 'st', kind: 'stack', name: 'st', wavelength: 'lam', ambient: '1', angle: `${ANGLE}*deg`, polarization: 'unpolarized',
    layers: Array.from({ length: LAYERS }, (_, j) => ({
      name: `L${j + 1}`, thickness: `${thickness(j)}*nm`, n: j % 2 ? 'nL' : 'nH', k: String(j % 2 ? low.k : j % 4 === 0 ? high.k : 0),
    })),
    substrate: { name: 'glass', n: '1.52', k: '1e-7', thickness: '1*mm', coherent: false },
  },
]

function engineRun(): Record<string, number[]> {
  const result = new SheetEngine().load(cells, 'stack bench')
  const c = result.cells[3]
  if (c.status !== 'ok') throw new Error(`the bench stack failed: ${c.error}`)
  return c.value as Record<string, number[]>
}

/** The same numbers by hand, into typed arrays, then JSON-ready arrays like the engine's result. */
function handRun(): Record<string, number[]> {
  const q = LAYERS
  const fwd = tmmPoint(q)
  const rev = tmmPoint(q)
  const bare = tmmPoint(0)
  const sin0 = Math.sin((ANGLE * Math.PI) / 180)
  const s2 = sin0 * sin0
  const lamOut = new Float64Array(N)
  const R = new Float64Array(N)
  const T = new Float64Array(N)
  const A = new Float64Array(N)
  const absorbed = Array.from({ length: q + 1 }, () => new Float64Array(N))
  const cosS = Math.sqrt(1 - s2 / (1.52 * 1.52))
  for (let i = 0; i < N; i++) {
    const lam = 350e-9 + ((1100e-9 - 350e-9) * i) / (N - 1)
    const um2 = (lam * 1e6) ** 2
    for (let j = 0; j < q; j++) {
      const m = j % 2 ? low : high
      fwd.n[j] = m.A + m.B / um2
      fwd.k[j] = j % 2 ? low.k : j % 4 === 0 ? high.k : 0
      fwd.d[j] = thickness(j) * 1e-9
      rev.n[q - 1 - j] = fwd.n[j]
      rev.k[q - 1 - j] = fwd.k[j]
      rev.d[q - 1 - j] = fwd.d[j]
    }
    const x = Math.exp((-4 * Math.PI * 1e-7 * 1e-3) / (lam * cosS))
    for (let pol = 0; pol < 2; pol++) {
      const p = pol === 1
      solveTmmPoint(fwd, lam, 1, s2, p, 1.52, 0)
      solveTmmPoint(rev, lam, 1.52, s2, p, 1, 0)
      solveTmmPoint(bare, lam, 1.52, s2, p, 1, 0)
      const D = 1 - x * x * bare.R * rev.R
      const up = (fwd.T * x * x * bare.R) / D
      R[i] += 0.5 * (fwd.R + rev.T * up)
      T[i] += 0.5 * ((fwd.T * x * (1 - bare.R)) / D)
      for (let j = 0; j < q; j++) {
        const r = q - 1 - j
        // a layer with k = 0 absorbs nothing (its flux difference is rounding)
        if (fwd.k[j] !== 0) absorbed[j][i] += 0.5 * (Math.max(0, fwd.flux[j] - fwd.flux[j + 1]) + Math.max(0, rev.flux[r] - rev.flux[r + 1]) * up)
      }
      absorbed[q][i] += 0.5 * (((1 - x) * (1 + x * bare.R) * fwd.T) / D)
    }
    lamOut[i] = lam * 1e9
    let sum = 0
    for (let j = 0; j <= q; j++) sum += absorbed[j][i]
    A[i] = sum
  }
  const out: Record<string, number[]> = { wavelength: Array.from(lamOut), R: Array.from(R), T: Array.from(T), A: Array.from(A) }
  for (let j = 0; j < q; j++) out[`A_L${j + 1}`] = Array.from(absorbed[j])
  out.A_glass = Array.from(absorbed[q])
  return out
}

export default async function engineStack(): Promise<void> {
  const a = engineRun()
  const b = handRun()
  let worst = 0
  for (const key of Object.keys(b)) {
    if (!a[key]) throw new Error(`the engine's stack has no output ${key}`)
    for (let i = 0; i < N; i++) worst = Math.max(worst, Math.abs(a[key][i] - b[key][i]) / (key === 'wavelength' ? b[key][i] : 1))
  }
  if (!(worst < 1e-9)) throw new Error(`engine and hand-written stacks disagree by ${worst}`)
  const [engine, hand] = measurePair(engineRun, handRun, { runs: 21 })
  const ratio = engine.medianMs / hand.medianMs
  printBench('stack-10x2000', engine.medianMs, ratio)
  printTarget('≤ 1.5x hand-written', ratio <= 1.5)
}
