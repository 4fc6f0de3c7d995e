/**
 * sweep-200x2000: a 200-thickness × 2,000-wavelength sweep of a slab's absorptance through alpha_edge and
 * absorptance_slab, evaluated by the engine from a sheet (parse, graph, sweep, JSON-ready table), against a
 * hand-written TypeScript loop computing the same numbers with the same optics functions. Target ≤ 2×.
 */
import { SheetEngine } from '../../shared/engine/index'
import { absorptanceSlab, alphaEdge, photonEnergy } from '../../shared/optics/index'
import { q } from '../../shared/optics/constants'
import type { SheetCell } from '../../shared/schema/sheet'
import { measurePair, printBench, printTarget } from '../harness'

const N_LAMBDA = 2000
const N_D = 200

const cells: SheetCell[] = [
  { id: 'd', kind: 'parameter', name: 'd', value: 1000, unit: 'nm' },
  { id: 'R', kind: 'parameter', name: 'R', value: 0.3 },
  { id: 'lam', kind: 'formula', name: 'lam', source: `grid(300*nm, 1100*nm, ${N_LAMBDA})`, unit: 'nm' },
  { id: 'E', kind: 'formula', name: 'E', source: 'photon_energy(lam)', unit: 'eV' },
  { id: 'alpha', kind: 'formula', name: 'alpha', source: 'alpha_edge(E, 1.48*eV, 4e9*eV/cm^2, 0.5, 22*meV)', unit: '1/cm' },
  { id: 'A', kind: 'formula', name: 'A', source: 'absorptance_slab(alpha, d, R)', unit: '%' },
  { id: 'thick', kind: 'sweep', name: 'thick', parameter: 'd', from: 10, to: 3000, steps: N_D, unit: 'nm', outputs: ['A'] },
]

function engineRun(): number[][] {
  const result = new SheetEngine().load(cells, 'sweep bench')
  const sweep = result.cells[6].value as { outputs: { A: number[][] } }
  return sweep.outputs.A
}

/** The same numbers by hand: one wavelength grid, α once, then one absorptance row per thickness, in %. */
function handRun(): number[][] {
  const lam = new Float64Array(N_LAMBDA)
  const step = (1100e-9 - 300e-9) / (N_LAMBDA - 1)
  for (let i = 0; i < N_LAMBDA; i++) lam[i] = 300e-9 + i * step
  const alpha = alphaEdge(photonEnergy(lam), 1.48 * q, (4e9 * q) / 1e-4, 0.5, 22e-3 * q)
  const rows: number[][] = []
  const dStep = (3000 - 10) / (N_D - 1)
  for (let k = 0; k < N_D; k++) {
    const A = absorptanceSlab(alpha, (10 + k * dStep) * 1e-9, 0.3) as Float64Array
    const row = new Array<number>(N_LAMBDA)
    for (let i = 0; i < N_LAMBDA; i++) row[i] = A[i] / 0.01
    rows.push(row)
  }
  return rows
}

export default async function engineSweep(): Promise<void> {
  const a = engineRun()
  const b = handRun()
  let worst = 0
  for (let k = 0; k < N_D; k++) for (let i = 0; i < N_LAMBDA; i++) worst = Math.max(worst, Math.abs(a[k][i] - b[k][i]))
  if (!(worst < 1e-9)) throw new Error(`engine and hand-written sweeps disagree by ${worst}`)
  const [engine, hand] = measurePair(engineRun, handRun, { runs: 21 })
  const ratio = engine.medianMs / hand.medianMs
  printBench('sweep-200x2000', engine.medianMs, ratio)
  printTarget('≤ 2x hand-written', ratio <= 2)
}
