// KaTeX for CalcTex (app/components/calc/Tex.vue), the one typesetter of the calculation screens.
import katex from 'katex'

const TYPESET_KEPT = 400
/** Longer formulas are set each time: a kept one holds its TeX and HTML (about ten times the TeX) in memory. */
const KEPT_UP_TO_CHARACTERS = 20_000
const typesetCache = new Map<string, string>()

/**
 * KaTeX's HTML of `tex`, with its MathML copy unless `mathml` is false (the print view's formulas: see CalcTex). Its
 * output depends on the TeX, the display mode and that choice only, so it is kept for the formulas set last (on the
 * server too: the same pure function for every request): the PDF renderer's warm tab prints one revision again and
 * again (a preview, then its issue; a package), and typesetting every formula afresh was much of a render's script
 * time (a Chromium trace of the print view).
 */
export function typeset(tex: string, displayMode: boolean, mathml = true): string {
  const key = `${displayMode ? 'D' : 'I'}${mathml ? 'M' : 'H'}${tex}`
  const kept = typesetCache.get(key)
  if (kept !== undefined) {
    // Most recently used last, so the oldest is the first to go.
    typesetCache.delete(key)
    typesetCache.set(key, kept)
    return kept
  }
  const html = katex.renderToString(tex, {
    displayMode,
    throwOnError: false,
    // Parameter symbols are typed by the engineer: no \href, \url or raw HTML (KaTeX's `trust` stays off).
    trust: false,
    strict: 'ignore',
    output: mathml ? 'htmlAndMathml' : 'html',
  })
  if (tex.length > KEPT_UP_TO_CHARACTERS) return html
  typesetCache.set(key, html)
  if (typesetCache.size > TYPESET_KEPT) typesetCache.delete(typesetCache.keys().next().value!)
  return html
}

