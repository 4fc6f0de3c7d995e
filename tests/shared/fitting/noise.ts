import seedrandom from 'seedrandom'

/** Standard normal deviates from a seeded generator (Box–Muller), so noisy-data tests are reproducible. */
export function gaussian(seed: string): () => number {
  const rng = seedrandom(seed)
  return () => Math.sqrt(-2 * Math.log(1 - rng())) * Math.cos(2 * Math.PI * rng())
}

/** Mean and sample standard deviation. */
export function meanSd(xs: number[]): { mean: number; sd: number } {
  const mean = xs.reduce((a, b) => a + b, 0) / xs.length
  const sd = Math.sqrt(xs.reduce((a, b) => a + (b - mean) ** 2, 0) / (xs.length - 1))
  return { mean, sd }
}
