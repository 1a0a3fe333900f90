// POST /api/attachments/[id]/step-fit and POST /api/tuning (issue 10, items 2 to 4) over HTTP against the built app:
// an uploaded step test (an invented plant with seeded noise, support/step-tests.ts) is fitted both ways, a bad row
// is refused naming it, another project's record is refused and audited, and a rule answers its settings.
import { beforeAll, describe, expect, it } from 'vitest'
import { sampleStepTest, syntheticStepCsv } from '../../scripts/lib/synthetic-step-test'
import { database } from './support/client'
import { newSheet, theCast, type Cast } from './support/sheets'
import { uploadStepTest, uploadText } from './support/step-tests'

let cast: Cast
let sheetId: number
let attachmentId: number
beforeAll(async () => {
  cast = await theCast()
  sheetId = (await newSheet(cast.engineer, cast.demoProjectId)).id
  attachmentId = await uploadStepTest(cast.engineer, sheetId)
})

describe('POST /api/attachments/[id]/step-fit', () => {
  it('finds the columns and the step and fits the invented plant back (K 1.8, τ 12 s, θ 3.5 s)', async () => {
    const answer = await cast.checker.post(`/api/attachments/${attachmentId}/step-fit`, {})
    expect(answer.status, JSON.stringify(answer.body)).toBe(200)
    const fit = answer.body
    expect(fit.attachment).toMatchObject({ id: attachmentId, name: 'step-test.csv' })
    expect(fit.attachment.sha256).toMatch(/^[0-9a-f]{64}$/)
    expect(fit.record).toMatchObject({ samples: 600, sampleTimeFrom: 'time column', timeUnit: 's' })
    expect(fit.record.sampleTime).toBeCloseTo(0.2, 12)
    expect(fit.record.columns.process).toEqual({ number: 3, header: 'flow (L/h)', unit: 'L/h' })
    expect(fit.step).toMatchObject({ index: 50, time: 10, change: 10, found: true })
    // Tolerances as in tests/calc/step-fit.test.ts: least squares K within 1 %, τ within 2 %, θ within a sample.
    expect(Math.abs(fit.leastSquares.gain / sampleStepTest.gain - 1)).toBeLessThan(0.01)
    expect(Math.abs(fit.leastSquares.timeConstant / sampleStepTest.timeConstant - 1)).toBeLessThan(0.02)
    expect(Math.abs(fit.leastSquares.deadTime - sampleStepTest.deadTime)).toBeLessThan(0.2)
    expect(Math.abs(fit.twoPoint.gain / sampleStepTest.gain - 1)).toBeLessThan(0.02)
    for (const method of ['twoPoint', 'leastSquares']) {
      expect(fit[method].rmse).toBeGreaterThan(0.1)
      expect(fit[method].r2).toBeGreaterThan(0.99)
    }
    expect(fit.plot.t).toHaveLength(600)
    expect(fit.plot.leastSquares).toHaveLength(600)
  })

  it('takes the step and the columns the engineer gives', async () => {
    const answer = await cast.engineer.post(`/api/attachments/${attachmentId}/step-fit`, { columns: { time: 1, output: 2, process: 3 }, stepTime: 9.9 })
    expect(answer.status).toBe(200)
    expect(answer.body.step).toMatchObject({ index: 50, time: 10, found: false })
  })

  it('refuses a bad row naming it as the file counts rows, with the headers to choose from', async () => {
    const rows = Array.from({ length: 30 }, (_, i) => `${i},${i < 10 ? 40 : 50},${20 + (i < 12 ? 0 : 1)}`)
    rows[16] = '16,50,n/a'
    const id = (await uploadText(cast.engineer, sheetId, 'bad-row.csv', `t (s),co (%),pv\n${rows.join('\n')}\n`)).body.id
    const answer = await cast.engineer.post(`/api/attachments/${id}/step-fit`, {})
    expect(answer.status).toBe(400)
    // Data row 17 (index 16) is the file's row 18: the header is row 1.
    expect(answer.body.data).toEqual({ field: 'file', row: 18, message: 'row 18: "pv" is not a number ("n/a")', headers: ['t (s)', 'co (%)', 'pv'] })
  })

  it('asks for the sample time of a record without a time column, and for the columns it cannot recognise', async () => {
    const rows = Array.from({ length: 30 }, (_, i) => `${i < 10 ? 40 : 50};${20 + (i < 12 ? 0 : 1)}`)
    const id = (await uploadText(cast.engineer, sheetId, 'no-time.csv', `a;b\n${rows.join('\n')}\n`)).body.id
    const unrecognised = await cast.engineer.post(`/api/attachments/${id}/step-fit`, {})
    expect(unrecognised.status).toBe(400)
    expect(unrecognised.body.data).toMatchObject({ field: 'columns', headers: ['a', 'b'] })
    const noTime = await cast.engineer.post(`/api/attachments/${id}/step-fit`, { columns: { time: null, output: 1, process: 2 } })
    expect(noTime.body.data.field).toBe('sampleTime')
    const given = await cast.engineer.post(`/api/attachments/${id}/step-fit`, { columns: { time: null, output: 1, process: 2 }, sampleTime: 2 })
    expect(given.status).toBe(200)
    expect(given.body.step.time).toBe(20)
  })

  it('refuses a client and a non-member (audited), a file that is no text, and reads a plain-text record as one', async () => {
    expect((await cast.client.post(`/api/attachments/${attachmentId}/step-fit`, {})).status).toBe(403)
    const outsider = await cast.outsider.post(`/api/attachments/${attachmentId}/step-fit`, {})
    expect(outsider.status).toBe(403)
    const [refusal] = await database()`select action from audit_events where path = ${`/api/attachments/${attachmentId}/step-fit`} and status = 403 order by id desc limit 1`
    expect(refusal?.action).toBe('access.refused')
    const pdf = await uploadText(cast.engineer, sheetId, 'datasheet.pdf', new TextEncoder().encode('%PDF-1.4\n1 0 obj << >> endobj\ntrailer << >>\n%%EOF\n'))
    expect(pdf.status).toBe(201)
    expect((await cast.engineer.post(`/api/attachments/${pdf.body.id}/step-fit`, {})).status).toBe(415)
    // Plain text by its content (a comment line makes the rows uneven): read as a record all the same.
    const text = await uploadText(cast.engineer, sheetId, 'notes.txt', `# invented record\n${syntheticStepCsv(sampleStepTest)}`)
    expect(text.status).toBe(201)
    expect(text.body.type).toBe('text/plain')
    const fitted = await cast.engineer.post(`/api/attachments/${text.body.id}/step-fit`, {})
    expect(fitted.status).toBe(200)
    expect(fitted.body.record.samples).toBe(600)
    expect((await cast.engineer.post('/api/attachments/2147483647/step-fit', {})).status).toBe(404)
  })
})

describe('POST /api/tuning', () => {
  it('answers SIMC PI for the fitted plant with its formula and source', async () => {
    const answer = await cast.engineer.post('/api/tuning', { rule: 'simc-pi', model: { gain: 1.8, timeConstant: 12, deadTime: 3.5 } })
    expect(answer.status).toBe(200)
    // Kc = τ/(K(τc + θ)) with τc = θ: 12/(1.8·7) = 0.9524; Ti = min(12, 28) = 12 (Skogestad 2003).
    expect(answer.body.settings.gain).toBeCloseTo(12 / (1.8 * 7), 10)
    expect(answer.body.settings.integralTime).toBe(12)
    expect(answer.body.source).toContain('Skogestad')
  })

  it('refuses a rule that does not apply, naming the field', async () => {
    const answer = await cast.engineer.post('/api/tuning', { rule: 'zn-pid', model: { gain: 1.8, timeConstant: 12, deadTime: 0 } })
    expect(answer.status).toBe(400)
    expect(answer.body.data.field).toBe('model.deadTime')
  })
})
