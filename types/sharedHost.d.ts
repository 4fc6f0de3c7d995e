/**
 * The few host facilities shared/ may use, which every place it runs provides (browsers, the evaluation worker,
 * Node ≥ 20). Declared here because shared/ is type-checked without DOM or Node types (tsconfig.shared.json); the
 * other configurations get them from the DOM and Node libraries and never see this file.
 */
declare global {
  var crypto: { getRandomValues<T extends Uint8Array>(array: T): T }
  var performance: { now(): number }
}

export {}
