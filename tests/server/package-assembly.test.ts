// The package's PDF assembled while its sheets print (server/services/package-pdf.ts): sheets handed over in any
// order land in the package's order, the cover's index counts their pages, and a sheet that cannot be read fails its
// own `add` and the package. Chromium is not needed here: the cover's print is replaced by a one-page PDF made with
// pdf-lib, and each sheet is told apart by its page width.
import { readFileSync } from 'node:fs'
import { PDFDocument } from 'pdf-lib'
import { describe, expect, it, vi } from 'vitest'
import type { PrintCover } from '../../shared/schemas/print'

const covers: PrintCover[] = []
vi.mock('../../server/utils/render-token', () => ({
  makeCoverToken: (cover: PrintCover) => {
    covers.push(cover)
    return `cover-${covers.length}`
  },
  dropCoverToken: () => {},
}))
vi.mock('../../server/services/pdf-render', () => ({
  fullSpeed: Number.POSITIVE_INFINITY,
  RenderError: class RenderError extends Error {},
  printAppPage: async () => {
    const cover = await PDFDocument.create()
    cover.addPage([400, 800])
    return { bytes: await cover.save(), blockedRequests: [], marks: { tab: 0, ready: 0, printed: 0 } }
  },
}))
const { assemblePackagePdf } = await import('../../server/services/package-pdf')

const font = Promise.resolve(new Uint8Array(readFileSync('node_modules/@fontsource/noto-sans/files/noto-sans-latin-400-normal.woff')))

/** A sheet's PDF of `pages` pages, each `width` points wide. */
async function sheetPdf(pages: number, width: number) {
  const document = await PDFDocument.create()
  for (let page = 0; page < pages; page++) document.addPage([width, 842])
  return document.save()
}

const part = async (number: string, pages: number, width: number) => ({ number, title: `Sheet ${number}`, loopTag: 'TIC-1', label: 'A', newInPackage: true, bytes: await sheetPdf(pages, width) })

const facts = {
  firm: { name: 'Test firm', paperSize: 'A4' as const },
  projectNumber: 'T-1',
  projectName: 'Test project',
  clientName: 'Test client',
  packageNumber: 'P01',
  packageTitle: 'Test package',
  label: 'A',
  purpose: 'review' as const,
  issuedBy: 'Test engineer',
  issuedAt: '2026-12-03T12:00:00.000Z',
  recipients: [],
}

describe('a package PDF assembled as its sheets come', () => {
  it('puts sheets handed over out of order in the package order, and indexes their pages after the cover', async () => {
    covers.length = 0
    const assembly = assemblePackagePdf(7, 3, font)
    const [first, second, third] = await Promise.all([part('S-1', 1, 500), part('S-2', 2, 510), part('S-3', 3, 520)])
    // The third and the first arrive before the second: the third waits for it.
    await Promise.all([assembly.add(2, third), assembly.add(0, first)])
    await assembly.add(1, second)
    const pdf = await assembly.finish(facts)

    expect(pdf.pages).toBe(7)
    const read = await PDFDocument.load(pdf.bytes)
    expect(read.getPages().map((page) => Math.round(page.getWidth()))).toEqual([400, 500, 510, 510, 520, 520, 520])
    expect(covers).toHaveLength(1)
    expect(covers[0]!.index.map(({ number, firstPage, lastPage }) => [number, firstPage, lastPage])).toEqual([
      ['S-1', 2, 2],
      ['S-2', 3, 4],
      ['S-3', 5, 7],
    ])
    expect(covers[0]!.totalPages).toBe(7)
    expect(read.getKeywords()).toContain('S-1 S-2 S-3')
  })

  it('fails the add of a sheet whose PDF cannot be read, and the package with it', async () => {
    const assembly = assemblePackagePdf(8, 2, font)
    await assembly.add(0, await part('S-1', 1, 500))
    await expect(assembly.add(1, { ...(await part('S-2', 1, 500)), bytes: new TextEncoder().encode('not a PDF') })).rejects.toThrow()
    await expect(assembly.finish(facts)).rejects.toThrow()
  })

  it('will not finish before every sheet is in', async () => {
    const assembly = assemblePackagePdf(9, 2, font)
    await assembly.add(1, await part('S-2', 1, 500))
    await expect(assembly.finish(facts)).rejects.toThrow('The package has 2 sheets and 0 were merged')
  })
})
