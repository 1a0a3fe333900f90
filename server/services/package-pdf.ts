// The PDF of a package: the cover sheet (transmittal) printed by Chromium from the package print view
// (/packages/[id]/print), then every sheet's own PDF, merged with pdf-lib, and "package page p of P" stamped at the
// head of every page in a Noto face shipped with the app (embedded through @pdf-lib/fontkit; a standard 14 font
// would not be embedded).
import fontkit from '@pdf-lib/fontkit'
import { PDFDocument, rgb, type PDFFont } from 'pdf-lib'
import { packagePdfFileName, type PrintCover, type PrintCoverEntry } from '../../shared/schemas/print'
import { issuedForWords } from '../../shared/schemas/lifecycle'
import { sha256Hex } from '../utils/content-hash'
import { dropCoverToken, makeCoverToken } from '../utils/render-token'
import { fullSpeed, printAppPage, RenderError, type RenderedPdf } from './pdf-render'

/** One sheet of the package, in the package's order, with its PDF (just rendered, or stored at an earlier issue). */
export interface PackagePart extends Omit<PrintCoverEntry, 'firstPage' | 'lastPage'> {
  bytes: Uint8Array
}

export type CoverFacts = Omit<PrintCover, 'index' | 'coverPages' | 'totalPages'>

/** Where each part starts and ends when the cover takes `coverPages` pages. */
function indexOf(parts: Array<PackagePart & { pages: number }>, coverPages: number): PrintCoverEntry[] {
  let next = coverPages + 1
  return parts.map(({ bytes: _bytes, pages, ...entry }) => {
    const firstPage = next
    next += pages
    return { ...entry, firstPage, lastPage: next - 1 }
  })
}

async function printCover(packageId: number, cover: PrintCover, blocked: string[]): Promise<PDFDocument> {
  const token = makeCoverToken(cover)
  try {
    const printed = await printAppPage(`/packages/${packageId}/print?render=${encodeURIComponent(token)}`)
    blocked.push(...printed.blockedRequests)
    return await PDFDocument.load(printed.bytes, { parseSpeed: fullSpeed })
  } finally {
    dropCoverToken(token)
  }
}

// The stamp's place: the top margin of the print views (12 mm), right-aligned at the side margin (15 mm).
const MM = 72 / 25.4
const STAMP_SIZE_PT = 7.5
const STAMP_COLOUR = rgb(0x23 / 255, 0x49 / 255, 0x4e / 255)
/** pdf-lib's pause for the event loop while saving a package, every this many objects (its default: 50). */
const SAVE_OBJECTS_PER_TICK = 500

/**
 * A package's PDF, made while its sheets print: `add` merges each sheet into it as soon as the sheets before it are
 * in, and `finish` prints the cover, stamps the pages and saves. Merged after the last sheet, the 20 sheets of
 * scripts/bench-package.ts took 0.5 s of the package's tail (scratch timings in the app); now each sheet's share is
 * done by the app while the next sheet prints, and the tail measured 1.22-1.29 s before, 0.70-0.94 s after.
 */
export interface PackageAssembly {
  /** The sheet at `index` (from 0) of the package's order, its PDF just printed or stored at an earlier issue. */
  add(index: number, part: PackagePart): Promise<void>
  /** The package's PDF, once every sheet has been added. */
  finish(facts: CoverFacts): Promise<RenderedPdf>
}

/**
 * Starts the PDF of package `packageId` of `count` sheets; `font` is the Noto face to stamp with (the caller reads it
 * from the server's assets).
 */
export function assemblePackagePdf(packageId: number, count: number, font: Promise<Uint8Array>): PackageAssembly {
  const merged = PDFDocument.create().then(async (document) => {
    document.registerFontkit(fontkit)
    return { document, face: await document.embedFont(await font, { subset: true }) }
  })
  // Its failure (the face unreadable) is answered by the first `add`, not reported as unhandled meanwhile.
  merged.catch(() => {})
  // Each sheet is parsed, copied into the package and let go in turn: the app holds the package and one sheet's
  // parse at a time, not all of them at once (their page counts, for the cover's index, come from these parses).
  // A sheet is parsed without pdf-lib's pauses for the event loop (about 7 ms each, the loop free between sheets),
  // and the package is saved with a pause every SAVE_OBJECTS_PER_TICK objects: measured on 20 demo sheets (182
  // pages) in a scratch script, parsing 331-416 → 132-164 ms and saving 66-107 → 21-26 ms.
  const counted: Array<PackagePart & { pages: number }> = []
  const arrived = new Map<number, PackagePart>()
  // One merge at a time, in the package's order: a sheet handed over before the sheets ahead of it waits in `arrived`.
  let merging = Promise.resolve()
  const mergeArrived = async () => {
    const { document } = await merged
    for (let part = arrived.get(counted.length); part; part = arrived.get(counted.length)) {
      arrived.delete(counted.length)
      const source = await PDFDocument.load(part.bytes, { parseSpeed: fullSpeed })
      for (const page of await document.copyPages(source, source.getPageIndices())) document.addPage(page)
      counted.push({ ...part, pages: source.getPageCount() })
    }
  }
  return {
    add(index, part) {
      arrived.set(index, part)
      merging = merging.then(mergeArrived)
      return merging
    },
    async finish(facts) {
      await merging
      if (counted.length !== count) throw new RenderError(`The package has ${count} sheets and ${counted.length} were merged`)
      return finishPackage(packageId, facts, counted, await merged)
    },
  }
}

async function finishPackage(packageId: number, facts: CoverFacts, counted: Array<PackagePart & { pages: number }>, { document: merged, face }: { document: PDFDocument; face: PDFFont }): Promise<RenderedPdf> {
  // The index needs the cover's own length: print it for one page, and again if it came out longer.
  let coverPages = 1
  const blockedRequests: string[] = []
  let cover: PDFDocument | undefined
  for (let attempt = 0; attempt < 3; attempt++) {
    const index = indexOf(counted, coverPages)
    const totalPages = coverPages + counted.reduce((sum, part) => sum + part.pages, 0)
    cover = await printCover(packageId, { ...facts, index, coverPages, totalPages }, blockedRequests)
    if (cover.getPageCount() === coverPages) break
    coverPages = cover.getPageCount()
    cover = undefined
  }
  if (!cover) throw new RenderError('The cover sheet did not settle on a page count')

  const coverCopies = await merged.copyPages(cover, cover.getPageIndices())
  coverCopies.forEach((page, index) => merged.insertPage(index, page))
  const total = merged.getPageCount()
  merged.getPages().forEach((page, index) => {
    const text = `${facts.projectNumber} ${facts.packageNumber} · package page ${index + 1} of ${total}`
    const { width, height } = page.getSize()
    page.drawText(text, { x: width - 15 * MM - face.widthOfTextAtSize(text, STAMP_SIZE_PT), y: height - 7 * MM, size: STAMP_SIZE_PT, font: face, color: STAMP_COLOUR })
  })

  merged.setTitle(`${facts.projectNumber} package ${facts.packageNumber}: ${facts.packageTitle}`, { showInWindowTitleBar: true })
  merged.setAuthor(`${facts.firm.name}; issued by ${facts.issuedBy}`)
  merged.setSubject(`Calculation package ${facts.packageNumber}, revision ${facts.label}, ${issuedForWords(facts.purpose)}, project ${facts.projectNumber} for ${facts.clientName}`)
  merged.setKeywords([facts.projectNumber, facts.packageNumber, `revision ${facts.label}`, ...counted.map((part) => part.number), 'calculation package'])
  merged.setCreator('Loopwright print view (Chromium)')
  merged.setProducer('Loopwright')
  merged.setCreationDate(new Date(facts.issuedAt))
  merged.setModificationDate(new Date(facts.issuedAt))
  const bytes = Buffer.from(await merged.save({ objectsPerTick: SAVE_OBJECTS_PER_TICK }))
  return { bytes, sha256: sha256Hex(bytes), pages: total, fileName: packagePdfFileName(facts.projectNumber, facts.packageNumber, facts.label), blockedRequests }
}
