/** A fit that cannot be done as asked (too few points, a log of a non-positive value, a singular problem). */
export class FitError extends Error {
  override name = 'FitError'
  constructor(message: string) {
    super(message)
  }
}
