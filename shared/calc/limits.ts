/** The contract's limits on a loop file (calc-contract.md, "Bad input"). */
export const MAX_DEGREE = 40
export const MAX_BLOCKS = 64
export const MAX_FILE_BYTES = 256 * 1024
/** Default time limit of one evaluation, ms. */
export const DEFAULT_DEADLINE_MS = 10_000
/** Padé orders the engine accepts; 2 is the contract's default. */
export const MAX_PADE_ORDER = 10
/** Largest whole exponent written in an expression; larger ones exceed every degree limit or blow up the coefficients. */
export const MAX_EXPONENT = 64
/** Most banded parameters: 2^10 = 1,024 tolerance corners (calc-contract.md, `tolerance_corners`). */
export const MAX_TOLERANCE_CORNERS = 1024
/**
 * Most term-by-term products one multiplication of the exact algebra may take (terms of one factor × terms
 * of the other, over every power of s). Measured with `npx tsx` on this 2-core machine under load: about
 * 8–11 µs a product, so 200,000 is some 2 s at worst; (a+b+c+d+e+f+g+h+1)^12 needs 680,238 in its last step.
 */
export const MAX_TERM_PRODUCTS = 200_000

/** A multiplication of the exact algebra asked for more than MAX_TERM_PRODUCTS; the engine names the field. */
export class WorkLimitError extends Error {
  constructor(readonly products: number) {
    super(`expands to about ${formatCount(products)} term products in one multiplication, above the limit of ${formatCount(MAX_TERM_PRODUCTS)}`)
    this.name = 'WorkLimitError'
  }
}

/** Refuses, before any work, a multiplication of `left` × `right` terms past the limit. */
export function checkTermProducts(left: number, right: number): void {
  const products = left * right
  if (products > MAX_TERM_PRODUCTS) throw new WorkLimitError(products)
}

export function formatCount(n: number): string {
  return n >= 1e15 ? n.toExponential(2) : Math.round(n).toLocaleString('en-GB')
}

/**
 * Longest TeX of one symbolic polynomial (num_tex, den_tex and the derivation's steps), in characters,
 * estimated before it is built. Chosen, not measured against KaTeX: some 50,000 terms, far more than a sheet's
 * page can show. Measured with the command line: three dead times at Padé order 10 give 277,332 characters and
 * pass; 16 symbolic lags in series (65,536 terms, about 7.3 million characters) are refused at once.
 */
export const MAX_POLYNOMIAL_TEX_CHARS = 2_000_000
/**
 * Highest degree, in the swept parameter, of the Hurwitz determinant the stability range solves: (degree in s − 1)
 * × (the parameter's highest power in a coefficient). Past it the determinant's coefficients overflow doubles
 * (measured: (s + K)^40 over K^40 gives degree 1,521 and fails) and its roots take seconds.
 */
export const MAX_STABILITY_RANGE_DEGREE = 120

/** A result the engine would have to build past one of the limits above, refused naming the field. */
export class SizeLimitError extends Error {
  constructor(message: string) {
    super(message)
    this.name = 'SizeLimitError'
  }
}
