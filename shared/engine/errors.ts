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

/** The message of a dependent whose input failed. */
export function blockedMessage(inputName: string): string {
  return `blocked: input ${inputName} failed`
}

/** The message on each cell of a cycle: `circular reference: a → b → a`. */
export function cycleMessage(names: readonly string[]): string {
  return `circular reference: ${[...names, names[0]].join(' → ')}`
}

/** The message for names no cell, constant, unit or function defines. */
export function unknownNamesMessage(names: readonly string[]): string {
  return names.length === 1 ? `unknown name: ${names[0]}` : `unknown names: ${names.join(', ')}`
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
