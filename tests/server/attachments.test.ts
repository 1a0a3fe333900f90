// Attachments (issue 10, item 1; server/services/attachments.ts): each accepted type round-trips through the fake S3
// with its bytes and SHA-256; every refused kind, and a store that fails, leaves no row and no object (the bucket is
// listed with the S3 SDK itself); a client sees no draft's attachments; an issued revision's are frozen, by the routes
// (409) and by the database (drizzle/0013_attachments_frozen.sql).
import { execFileSync } from 'node:child_process'
import { createHash } from 'node:crypto'
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import { crc32, deflateSync } from 'node:zlib'
import { ListObjectsV2Command, S3Client } from '@aws-sdk/client-s3'
import { PDFDocument, StandardFonts } from 'pdf-lib'
import { afterAll, beforeAll, describe, expect, it, inject } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import { database, issueSheetAndWait } from './support/client'
import { newSheet, theCast, type Cast } from './support/sheets'

const root = fileURLToPath(new URL('../..', import.meta.url))
const sha256 = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex')
const MiB = 1024 * 1024

let cast: Cast
let s3: S3Client
const store = inject('objectStore')
beforeAll(async () => {
  cast = await theCast()
  s3 = new S3Client({ endpoint: store.endpoint, region: store.region, forcePathStyle: true, credentials: { accessKeyId: store.accessKeyId, secretAccessKey: store.secretAccessKey } })
})
afterAll(() => s3.destroy())

/** The keys the fake S3 holds for a sheet, listed with the SDK (the service names objects `sheets/<id>/…`). */
async function objectsOf(sheetId: number): Promise<string[]> {
  const listed = await s3.send(new ListObjectsV2Command({ Bucket: store.bucket, Prefix: `sheets/${sheetId}/` }))
  return (listed.Contents ?? []).map((object) => object.Key!).sort()
}
async function rowsOf(sheetId: number): Promise<number> {
  const [row] = await database()`select count(*)::int as n from attachments a join sheet_revisions r on r.id = a.revision_id where r.sheet_id = ${sheetId}`
  return row!.n
}

// Sample files, made here: a PDF by pdf-lib; a PNG written by hand after the PNG specification (W3C, 2003: signature,
// IHDR, IDAT of zlib data, IEND, each chunk with its CRC-32); a JPEG rendered from the PDF by poppler's pdftoppm
// (Debian's poppler-utils, installed by scripts/setup).
async function samplePdf(): Promise<Uint8Array> {
  const document = await PDFDocument.create()
  const page = document.addPage([200, 100])
  page.drawText('Invented datasheet', { x: 10, y: 50, size: 12, font: await document.embedFont(StandardFonts.Helvetica) })
  return document.save()
}
function samplePng(): Uint8Array {
  const chunk = (type: string, data: Buffer) => {
    const length = Buffer.alloc(4)
    length.writeUInt32BE(data.length)
    const typed = Buffer.concat([Buffer.from(type, 'ascii'), data])
    const crc = Buffer.alloc(4)
    crc.writeUInt32BE(crc32(typed))
    return Buffer.concat([length, typed, crc])
  }
  const header = Buffer.alloc(13)
  header.writeUInt32BE(2, 0) // width
  header.writeUInt32BE(2, 4) // height
  header.set([8, 2, 0, 0, 0], 8) // 8 bits, truecolour, deflate, no filter method, no interlace
  const pixels = Buffer.from([0, 255, 0, 0, 0, 0, 255, 0, 0, 0, 255, 255, 255, 255, 0, 0, 0])
  return Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), chunk('IHDR', header), chunk('IDAT', deflateSync(pixels)), chunk('IEND', Buffer.alloc(0))])
}
function sampleJpeg(pdf: Uint8Array): Uint8Array {
  const folder = mkdtempSync(join(tmpdir(), 'loopwright-jpeg-'))
  try {
    writeFileSync(join(folder, 'in.pdf'), pdf)
    execFileSync('pdftoppm', ['-jpeg', '-r', '20', '-singlefile', join(folder, 'in.pdf'), join(folder, 'out')])
    return readFileSync(join(folder, 'out.jpg'))
  } finally {
    rmSync(folder, { recursive: true, force: true })
  }
}
const text = (value: string) => new TextEncoder().encode(value)
const csv = text('time_s,output_pct,level_m\n0,30,2.10\n5,35,2.11\n10,35,2.25\n')

async function upload(sheetId: number, name: string, bytes: Uint8Array, who = cast.engineer) {
  return who.upload(`/api/sheets/${sheetId}/attachments`, name, bytes)
}

describe('an upload of each accepted type round-trips', () => {
  it('PDF, PNG, JPEG, CSV and plain text: the type found from the content, the bytes and SHA-256 kept', async () => {
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    const pdf = await samplePdf()
    const files: Array<{ name: string; bytes: Uint8Array; type: string }> = [
      { name: 'Pump datasheet.pdf', bytes: pdf, type: 'application/pdf' },
      { name: 'header-photo.png', bytes: samplePng(), type: 'image/png' },
      { name: 'panel photo.jpeg', bytes: sampleJpeg(pdf), type: 'image/jpeg' },
      { name: 'step test.csv', bytes: csv, type: 'text/csv' },
      // A tab-separated record is delimited rows too; a file without extension is judged by its content alone.
      { name: 'tab-separated', bytes: text('t\tu\ty\n0\t1\t2\n1\t1\t3\n'), type: 'text/csv' },
      { name: 'Site notes – pump 2.txt', bytes: text('Transmitter PT-214 ranged 0 to 10 bar(g).\nValve fails closed.\n'), type: 'text/plain' },
    ]
    const made: Array<{ id: number; name: string; bytes: Uint8Array }> = []
    for (const file of files) {
      const answer = await upload(sheet.id, file.name, file.bytes)
      expect(answer.status, JSON.stringify(answer.body)).toBe(201)
      expect(answer.body).toEqual({ id: expect.any(Number), name: file.name, size: file.bytes.length, sha256: sha256(file.bytes), type: file.type })
      made.push({ id: answer.body.id, name: file.name, bytes: file.bytes })
    }
    for (const file of made) {
      const download = await cast.checker.get(`/api/attachments/${file.id}`)
      expect(download.status).toBe(200)
      expect(Buffer.compare(download.body, Buffer.from(file.bytes))).toBe(0)
      expect(download.headers.get('x-content-sha256')).toBe(sha256(file.bytes))
      expect(download.headers.get('content-disposition')).toContain(`filename*=UTF-8''${encodeURIComponent(file.name)}`)
    }
    const listed = await cast.engineer.get(`/api/sheets/${sheet.id}/attachments`)
    expect(listed.status).toBe(200)
    expect(listed.body.canUpload).toBe(true)
    expect(listed.body.attachments.map((a: { name: string }) => a.name)).toEqual(files.map((file) => file.name))
    expect(await objectsOf(sheet.id)).toHaveLength(files.length)
    const [audited] = await database()`select count(*)::int as n from audit_events where action = 'attachment.downloaded' and sheet_id = ${sheet.id}`
    expect(audited!.n).toBe(files.length)
  })
})

describe('a refused file leaves no row and no object', () => {
  it('refuses a misleading name, a file past 25 MiB, an empty file and names with path characters', async () => {
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    const refusals: Array<{ name: string; bytes: Uint8Array; status: number; says: RegExp }> = [
      // A Windows program (its "MZ" signature) named like a PDF, a PNG named like a PDF, a PDF named like a CSV.
      { name: 'datasheet.pdf', bytes: Uint8Array.from([0x4d, 0x5a, 0x90, 0x00, 0x03, 0x00, 0x00, 0x00, 0x04, 0x00, 0x00, 0x00, 0xff, 0xff, 0x00, 0x00]), status: 415, says: /not a PDF, PNG, JPEG, CSV or plain-text file/ },
      { name: 'drawing.pdf', bytes: samplePng(), status: 415, says: /named like a PDF but its content is a PNG image/ },
      { name: 'record.csv', bytes: await samplePdf(), status: 415, says: /named like CSV data but its content is a PDF/ },
      // Bytes that are not UTF-8 text, and text with a NUL.
      { name: 'record.txt', bytes: Uint8Array.from([0x61, 0xff, 0xfe, 0x62]), status: 415, says: /by its content/ },
      { name: 'notes.txt', bytes: text('a\u0000b'), status: 415, says: /by its content/ },
      { name: 'too big.txt', bytes: new Uint8Array(25 * MiB + 1).fill(0x61), status: 413, says: /at most 25 MiB/ },
      { name: 'empty.csv', bytes: new Uint8Array(0), status: 400, says: /is empty/ },
      { name: '../../etc/record.csv', bytes: csv, status: 400, says: /path character/ },
      { name: '..record.csv', bytes: csv, status: 400, says: /“\.\.”/ },
      { name: 'folder\\record.csv', bytes: csv, status: 400, says: /path character/ },
      { name: 'record\u0007.csv', bytes: csv, status: 400, says: /control character/ },
    ]
    for (const refusal of refusals) {
      const answer = await upload(sheet.id, refusal.name, refusal.bytes)
      expect(answer.status, `${refusal.name}: ${JSON.stringify(answer.body)}`).toBe(refusal.status)
      expect(answer.body.data.field).toBe('file')
      expect(answer.body.message).toMatch(refusal.says)
    }
    expect(await rowsOf(sheet.id)).toBe(0)
    expect(await objectsOf(sheet.id)).toEqual([])
  })

  it('a file of exactly 25 MiB is taken', async () => {
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    const answer = await upload(sheet.id, 'long record.txt', new Uint8Array(25 * MiB).fill(0x62))
    expect(answer.status, JSON.stringify(answer.body)).toBe(201)
    expect(answer.body.size).toBe(25 * MiB)
    expect(await objectsOf(sheet.id)).toHaveLength(1)
  })

  it('a store that fails: 503 and no row; an insert that fails: its object is deleted again', async () => {
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    const objectStore = (command: string) => execFileSync(`${root}scripts/object-store`, [command, String(store.port), store.bucket], { stdio: 'pipe' })
    objectStore('stop')
    try {
      const answer = await upload(sheet.id, 'step test.csv', csv)
      expect(answer.status).toBe(503)
      expect(answer.body.message).toContain('nothing was kept')
    } finally {
      objectStore('start')
    }
    expect(await rowsOf(sheet.id)).toBe(0)
    expect(await objectsOf(sheet.id)).toEqual([])

    // The insert refused by a trigger (an injected server fault, so a 500 is the answer here): the object put
    // before it is removed.
    await database().unsafe(`
      create or replace function test_refuse_attachment() returns trigger language plpgsql as $$
      begin raise exception 'test: attachment insert refused'; end $$`)
    await database().unsafe('create trigger test_refuse_attachment before insert on attachments for each row execute function test_refuse_attachment()')
    try {
      expect((await upload(sheet.id, 'step test.csv', csv)).status).toBe(500)
    } finally {
      await database().unsafe('drop trigger if exists test_refuse_attachment on attachments')
    }
    expect(await rowsOf(sheet.id)).toBe(0)
    expect(await objectsOf(sheet.id)).toEqual([])
  })
})

describe('who sees and changes attachments', () => {
  it('a client can neither list nor download a draft’s attachments; an outsider neither; a checker cannot upload or delete', async () => {
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    const made = await upload(sheet.id, 'step test.csv', csv)
    expect(made.status).toBe(201)
    for (const who of [cast.client, cast.outsider]) {
      expect((await who.get(`/api/sheets/${sheet.id}/attachments`)).status).toBe(403)
      expect((await who.get(`/api/attachments/${made.body.id}`)).status).toBe(403)
    }
    expect((await upload(sheet.id, 'other.csv', csv, cast.checker)).status).toBe(403)
    expect((await cast.checker.delete(`/api/attachments/${made.body.id}`)).status).toBe(403)
    const [refusal] = await database()`select count(*)::int as n from audit_events where action = 'access.refused' and path = ${`/api/attachments/${made.body.id}`}`
    expect(refusal!.n).toBeGreaterThanOrEqual(2)
    // The engineer removes it from the draft: row and object both gone.
    expect((await cast.engineer.delete(`/api/attachments/${made.body.id}`)).status).toBe(200)
    expect(await rowsOf(sheet.id)).toBe(0)
    expect(await objectsOf(sheet.id)).toEqual([])
  })

  it('an issued revision’s attachment: the client downloads it; deleting answers 409; SQL cannot change it', async () => {
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    const made = await upload(sheet.id, 'step test.csv', csv)
    expect(made.status).toBe(201)
    expect((await cast.engineer.post(`/api/sheets/${sheet.id}/submit`, { version: 1 })).status).toBe(200)
    // In check: no more changes.
    expect((await upload(sheet.id, 'late.csv', csv)).status).toBe(409)
    expect((await cast.checker.post(`/api/sheets/${sheet.id}/approve`, { version: 1, password: demoPassword })).status).toBe(200)
    const { issued, job } = await issueSheetAndWait(cast.engineer, sheet.id, { version: 1, purpose: 'information', password: demoPassword })
    expect(job?.body.status, JSON.stringify(job?.body)).toBe('done')

    const listed = await cast.client.get(`/api/sheets/${sheet.id}/attachments`)
    expect(listed.status).toBe(200)
    expect(listed.body.attachments.map((a: { sha256: string }) => a.sha256)).toEqual([sha256(csv)])
    expect(listed.body.canDelete).toBe(false)
    const download = await cast.client.get(`/api/attachments/${made.body.id}`)
    expect(download.status).toBe(200)
    expect(Buffer.compare(download.body, Buffer.from(csv))).toBe(0)

    const refused = await cast.engineer.delete(`/api/attachments/${made.body.id}`)
    expect(refused.status).toBe(409)
    expect(refused.body.message).toContain('frozen')
    expect((await upload(sheet.id, 'late.csv', csv)).status).toBe(409)

    const sql = database()
    const revisionId = issued.revisionId as number
    const attempts = [
      sql`update attachments set name = 'renamed.csv' where id = ${made.body.id}`,
      sql`update attachments set revision_id = revision_id where id = ${made.body.id}`,
      sql`delete from attachments where id = ${made.body.id}`,
      sql`insert into attachments (revision_id, name, size, sha256, type, object_key, uploaded_by)
            values (${revisionId}, 'slipped in.csv', 1, repeat('0', 64), 'text/csv', ${`test/${made.body.id}`}, ${cast.ids.engineer})`,
    ]
    for (const attempt of attempts) await expect(attempt).rejects.toThrow(/refused/)
    const [still] = await sql`select name, sha256 from attachments where id = ${made.body.id}`
    expect(still).toEqual({ name: 'step test.csv', sha256: sha256(csv) })
    expect(await rowsOf(sheet.id)).toBe(1)
    expect(await objectsOf(sheet.id)).toHaveLength(1)

    // The next revision carries the file (same object); removing it from the draft keeps the issued one's.
    const revised = await cast.engineer.post(`/api/sheets/${sheet.id}/revise`, { version: 1 })
    expect(revised.status).toBe(200)
    const carried = await cast.engineer.get(`/api/sheets/${sheet.id}/attachments`)
    expect(carried.body.attachments.map((a: { name: string; sha256: string }) => [a.name, a.sha256])).toEqual([['step test.csv', sha256(csv)]])
    const draftCopy = carried.body.attachments[0].id as number
    expect(draftCopy).not.toBe(made.body.id)
    expect((await cast.engineer.delete(`/api/attachments/${draftCopy}`)).status).toBe(200)
    expect(await rowsOf(sheet.id)).toBe(1)
    expect(await objectsOf(sheet.id)).toHaveLength(1)
    const stillThere = await cast.client.get(`/api/attachments/${made.body.id}`)
    expect(stillThere.status).toBe(200)
    expect(Buffer.compare(stillThere.body, Buffer.from(csv))).toBe(0)
  })
})
