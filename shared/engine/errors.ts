/**
 * Errors of the evaluator. Inside the engine a failing operation throws a `CellError`; the graph catches it at the
 * cell boundary and turns it into the cell's `status: "error"` with the message, so nothing throws past the engine.
 * Messages are plain sentences a researcher can act on.
 */

export type ErrorKind = 'syntax' | 'name' | 'security' | 'limit' | 'time' | 'value' | 'cycle' | 'fit' | 'input'

export class CellError extends Error {
  constructor(
    message: string,
    readonly kind: ErrorKind = 'value',
  ) {
    super(message)
    this.name = 'CellError'
  }
}

/** The error of a formula cell with nothing in it yet; the page shows a hint instead of an error for it. */
export const EMPTY_FORMULA = 'the formula is empty'

/**
 * A query point of `interpolate` outside the range of its data (no extrapolation). Thrown with SI numbers; the cell
 * that called it rewrites the message in the display unit of its data where it knows it (cells.ts).
 */
export class OutsideDataError extends CellError {
  constructor(
    readonly point: number,
    readonly lo: number,
    readonly hi: number,
  ) {
    super(outsideDataMessage(point, lo, hi, (x) => String(Number(x.toPrecision(4)))), 'value')
    this.name = 'OutsideDataError'
  }
}

/** "interpolate: the point 3 eV lies outside the data, whose x runs from 1 eV to 2 eV; …" */
export function outsideDataMessage(point: number, lo: number, hi: number, show: (si: number) => string): string {
  return `interpolate: the point ${show(point)} lies outside the data, whose x runs from ${show(lo)} to ${show(hi)}; interpolate does not extrapolate: choose a point inside that range`
}

/**
 * The message of a dependent whose input failed (DESIGN §5's wording; the client finds the input's name after
 * "input" to link to that cell).
 */
export function blockedMessage(inputName: string): string {
  return `blocked: input ${inputName} failed`
}

/**
 * The message on each cell of a cycle, in words rather than arrows (the shipped Fira subsets have no "→"):
 * `circular reference: a uses b, which uses a; …`.
 */
export function cycleMessage(names: readonly string[]): string {
  if (names.length === 1)
    return `circular reference: ${names[0]} uses its own value; make the starting value a parameter cell`
  const rest = [...names.slice(2), names[0]].map((n) => `which uses ${n}`).join(', ')
  return `circular reference: ${names[0]} uses ${names[1]}, ${rest}; remove one of the references, or make one of these cells a parameter cell`
}

/**
 * The message for names no cell, constant, unit or function defines. `near` maps a name to a defined name that
 * differs only in case (`ev` for `eV`), which the message suggests; `hints` are sentences about particular names
 * (a function named without brackets). Without either, the message says what to check.
 */
export function unknownNamesMessage(
  names: readonly string[], near: ReadonlyMap<string, string> = new Map(), hints: readonly string[] = [],
): string {
  const head = names.length === 1 ? `unknown name: ${names[0]}` : `unknown names: ${names.join(', ')}`
  const guessed = names.filter((n) => near.has(n))
  const guesses = guessed.length === 1 && names.length === 1 ? [near.get(guessed[0])] : guessed.map((n) => `${near.get(n)} (for ${n})`)
  const parts = [head]
  if (guesses.length) parts.push(`did you mean ${guesses.join(', ')}? Names are case-sensitive`)
  parts.push(...hints)
  if (parts.length === 1)
    parts.push(names.length === 1 ? `check the spelling, or add a cell named ${names[0]}` : 'check the spelling, or add cells with these names')
  return parts.join('; ')
}

/**
 * A readable message for anything thrown while evaluating a cell: our own errors keep their text; the physics
 * library's RangeErrors are already sentences; a stack overflow (a pathological formula) gets its own sentence.
 */
export function messageOf(err: unknown): string {
  if (err instanceof CellError) return err.message
  if (err instanceof RangeError && /call stack/i.test(err.message)) return 'the formula is nested too deeply to evaluate'
  if (err instanceof Error) return err.message || err.name
  return String(err)
}
