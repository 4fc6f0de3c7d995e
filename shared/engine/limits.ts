/**
 * Evaluation limits: largest array, formula length, syntax-tree size and a wall-clock budget per cell that is
 * checked between operations (one operation is bounded by the array limit, so a formula cannot freeze a tab).
 */
import { formatNumber } from './describe'
import { CellError } from './errors'

export const DEFAULT_MAX_ELEMENTS = 1_000_000
export const DEFAULT_TIME_BUDGET_MS = 3000
/** Most numbers one sheet may hold across its cells (80 MB of doubles; its JSON result stays printable). */
export const DEFAULT_MAX_SHEET_NUMBERS = 10_000_000
/** Longest formula source accepted, characters. */
export const MAX_FORMULA_LENGTH = 5000
/** Largest syntax tree accepted, nodes (bounds compile and evaluation recursion). */
export const MAX_NODES = 2000

const now: () => number =
  typeof performance !== 'undefined' && typeof performance.now === 'function' ? () => performance.now() : () => Date.now()

export class Budget {
  private deadline = Infinity
  private budgetMs: number
  constructor(
    timeBudgetMs: number = DEFAULT_TIME_BUDGET_MS,
    readonly maxElements: number = DEFAULT_MAX_ELEMENTS,
  ) {
    this.budgetMs = timeBudgetMs
  }

  /** Starts the clock for one cell. */
  start(): void {
    this.deadline = now() + this.budgetMs
  }

  /** Milliseconds left of this cell's budget. */
  remainingMs(): number {
    return Math.max(0, this.deadline - now())
  }

  /** Throws when the cell has used up its time. Called between operations. */
  tick(): void {
    if (now() > this.deadline) throw this.overrun()
  }

  /** The error of a cell stopped for running out of time (also for work that keeps its own clock, such as fits). */
  overrun(): CellError {
    return new CellError(
      `evaluation took longer than the ${formatMs(this.budgetMs)} budget for one cell and was stopped; use shorter grids, fewer sweep steps or fewer free fit parameters`,
      'time',
    )
  }

  /** Throws before an operation would produce more elements than allowed. */
  elements(n: number, what: string): void {
    if (n > this.maxElements)
      throw new CellError(
        `${what} would have ${n.toLocaleString('en-US')} elements; the limit for one array is ${this.maxElements.toLocaleString('en-US')}: use shorter grids`,
        'limit',
      )
  }
}

function formatMs(ms: number): string {
  return ms >= 1000 ? `${formatNumber(ms / 1000)} s` : `${formatNumber(ms)} ms`
}
