// The cautions of product.md ("Cautions shown on every sheet and in the app"), in the words the app prints them:
// the box beside every result (CalcCautions) and every printed sheet. A firm's own standing cautions (firm settings)
// are printed beside them, less any line that only repeats one of these.

export const productCautions = [
  'This calculation supports, and never replaces, the judgement of the responsible licensed engineer.',
  'Verify the tuning on site under controlled conditions, with the process in a safe state.',
  'A basic control loop is not a safety function: safety instrumented functions follow their own standards and local codes.',
  "Confirm each final element's fail-safe position.",
  'Follow local codes and licensed practice wherever they differ from this result.',
] as const

/** A caution's words for comparing: letters and digits only, in lower case, one space between words. */
export function cautionWords(text: string): string {
  return text
    .normalize('NFKC')
    .toLowerCase()
    .replace(/[’‘`´]/g, "'")
    .replace(/[^\p{L}\p{N}']+/gu, ' ')
    .trim()
}

/** The firm's standing cautions that say something the product's own do not (the same words, normalised, are dropped). */
export function firmOnlyCautions(firmCautions: readonly string[]): string[] {
  const product = new Set(productCautions.map(cautionWords))
  return firmCautions.filter((caution) => !product.has(cautionWords(caution)))
}
