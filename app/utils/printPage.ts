import type { FirmSettings } from '#shared/schemas/firm'
import type { SheetDetail } from '#shared/schemas/sheets'

/** Paper of the print view: the CSS page size, and the width left between the side margins. */
export interface PrintPaper {
  name: FirmSettings['paperSize']
  cssSize: string
  contentWidthMm: number
}

const SIDE_MARGIN_MM = 15
// ISO 216 sheet widths (A4 210 mm, A3 297 mm) and ANSI Letter (8.5 in = 215.9 mm), portrait.
const PAPER_WIDTH_MM: Record<FirmSettings['paperSize'], number> = { A4: 210, Letter: 215.9, A3: 297 }

export function printPaper(size: FirmSettings['paperSize']): PrintPaper {
  return { name: size, cssSize: size === 'Letter' ? 'letter' : size, contentWidthMm: PAPER_WIDTH_MM[size] - 2 * SIDE_MARGIN_MM }
}

/** A CSS string of text typed by people: quotes, backslashes and `<` escaped, line breaks made spaces. */
export function cssString(text: string) {
  return `"${text.replace(/[\r\n\f]+/g, ' ').replace(/[\\"<>]/g, (c) => `\\${c.charCodeAt(0).toString(16)} `)}"`
}

/**
 * The `@page` rule of one sheet: the firm's paper size and margins, and in the bottom margin the sheet's number
 * and revision with "page x of y" on every page (the title block's page field; CSS page-margin boxes).
 */
export function printPageCss(sheet: SheetDetail, paper: PrintPaper) {
  const revision = sheet.revision
  const left = cssString(`${sheet.firm.name} · ${sheet.number} · revision ${revisionWords(revision.index, revision.label)} · ${sheetStatusNames[revision.status]}`)
  // The sans stack of tailwind.config.ts: a sign Noto Sans lacks comes from a shipped face, never a system one.
  const margin = `font-family: "Noto Sans", "Noto Sans Math", "Noto Serif", sans-serif; font-size: 7.5pt; color: #23494e;`
  return `@page { size: ${paper.cssSize} portrait; margin: 12mm ${SIDE_MARGIN_MM}mm 14mm ${SIDE_MARGIN_MM}mm;
  @bottom-left { content: ${left}; ${margin} }
  @bottom-right { content: "Page " counter(page) " of " counter(pages); ${margin} }
}`
}
