/** The part of js-quantities 1.8.0 (no bundled types) that the engine uses. */
declare module 'js-quantities' {
  interface Quantity {
    scalar: number
    numerator: string[]
    denominator: string[]
    toBase(): Quantity
    units(): string
    kind(): string | undefined
  }
  interface QtyStatic {
    (text: string): Quantity
    /** Returns null instead of throwing when the text is not a quantity. */
    parse(text: string): Quantity | null
    version: string
  }
  const Qty: QtyStatic
  export default Qty
}
