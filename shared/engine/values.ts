/**
 * Values of the formula language: numbers and Float64Arrays (SI, broadcast element-wise), and records — a spectrum's
 * columns or a fit's results — reachable only through `name.member`. Records are Maps so that no prototype,
 * constructor or function can ever be named through them.
 */
import type { Num } from '../optics/num'
import type { Dim } from './dimensions'
import { CellError } from './errors'

export interface Field {
  value: Num
  /** Dimension of the field, or null when unknown. */
  dim: Dim | null
}

export class RecordValue {
  constructor(
    /** What the record is, for messages: "spectrum", "fit". */
    readonly what: string,
    readonly owner: string,
    readonly fields: ReadonlyMap<string, Field>,
  ) {}

  /** The field `owner.member`, or a clear error listing the fields there are. */
  get(member: string): Field {
    const f = this.fields.get(member)
    if (f) return f
    const names = [...this.fields.keys()]
    throw new CellError(
      `the ${this.what} ${this.owner} has no ${this.what === 'spectrum' ? 'column' : 'result'} "${member}"` +
        (names.length ? ` (it has ${names.join(', ')})` : ''),
      'name',
    )
  }
}

export type Value = Num | RecordValue

/** A Num from a value, or an error saying a record needs a member. */
export function asNum(v: Value, what: string): Num {
  if (v instanceof RecordValue) {
    const first = v.fields.keys().next().value
    throw new CellError(
      `${what}: ${v.owner} is a ${v.what}; use one of its ${v.what === 'spectrum' ? 'columns' : 'results'}` +
        (first ? `, e.g. ${v.owner}.${first}` : ''),
      'value',
    )
  }
  return v
}
