/** The evaluation result object: produced identically by the command-line evaluator, the evaluate API and the worker. */

export type CellStatus = 'ok' | 'error' | 'blocked'

export interface FitValue {
  [key: string]: number | number[] | Record<string, number> | undefined
}

export interface SweepValue {
  /** Parameter values, in the sweep's unit. */
  parameter: number[]
  /** One row per parameter value for each output, in that output cell's display unit. */
  outputs: Record<string, (number | number[])[]>
}

export type CellValue = number | number[] | FitValue | SweepValue | Record<string, unknown> | null

export interface CellResult {
  index: number
  id?: string
  name?: string
  kind: string
  status: CellStatus
  value?: CellValue
  unit?: string
  /** Fit and stack cells: the unit of each output in `value` ("1" for a plain number or fraction). */
  units?: Record<string, string>
  dimension?: string
  warnings?: string[]
  error?: string
}

export interface EvaluationResult {
  title: string
  cells: CellResult[]
  /** Version of the engine that produced the result (snapshots record it). */
  engine?: string
}
