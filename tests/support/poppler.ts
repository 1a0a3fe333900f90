// PDFs read back with Debian's poppler-utils (pdfinfo, pdftotext, pdffonts), as a client's reader would, for the
// server and browser tests alike: one reading of each tool's output.
import { execFileSync } from 'node:child_process'

/** A poppler tool's standard output, as text. */
export function poppler(tool: 'pdfinfo' | 'pdftotext' | 'pdffonts', ...args: string[]): string {
  return execFileSync(tool, args, { encoding: 'utf8' })
}

/** pdfinfo's fields ("Title", "Keywords", "Pages", "Page size", …), each as it prints the value. */
export function pdfInfo(path: string): Record<string, string> {
  const fields: Record<string, string> = {}
  for (const line of poppler('pdfinfo', path).split('\n')) {
    const field = /^([^:]+):\s*(.*)$/.exec(line)
    if (field) fields[field[1]!] = field[2]!.trimEnd()
  }
  return fields
}

/** The page count, from pdfinfo. */
export function pdfPageCount(path: string): number {
  const pages = Number(pdfInfo(path).Pages)
  if (!Number.isInteger(pages)) throw new Error(`pdfinfo gave no page count for ${path}`)
  return pages
}

/**
 * Each page's text as pdftotext lays it out (`-layout`). One run for the whole file: pdftotext ends every page,
 * a blank one too, with a form feed, and a page reads the same as when it is asked for alone (`-f n -l n`).
 */
export function pdfPageTexts(path: string): string[] {
  const pages = poppler('pdftotext', '-layout', path, '-').split('\f')
  pages.pop() // what follows the last page's form feed: nothing
  return pages
}

export interface PdfFont {
  /** The face's PostScript name, with its subset tag (`ABCDEF+NotoSans-Regular`); `[none]` for an unnamed Type 3 font. */
  name: string
  /** One or two words: `CID TrueType`, `Type 3`, `TrueType`. */
  type: string
  encoding: string
  embedded: boolean
  subset: boolean
  unicode: boolean
}

/**
 * pdffonts' rows. Its columns are name, type, encoding, emb, sub, uni and the object id (number and generation),
 * after two header lines; the type alone may be two words, so the row is read from both ends.
 */
export function pdfFonts(path: string): PdfFont[] {
  return poppler('pdffonts', path)
    .trim()
    .split('\n')
    .slice(2)
    .map((line) => {
      const fields = line.trim().split(/\s+/)
      if (fields.length < 8) throw new Error(`pdffonts printed a row this reading does not know: ${line}`)
      const [encoding, embedded, subset, unicode] = fields.slice(-6, -2) as [string, string, string, string]
      return { name: fields[0]!, type: fields.slice(1, -6).join(' '), encoding, embedded: embedded === 'yes', subset: subset === 'yes', unicode: unicode === 'yes' }
    })
}
