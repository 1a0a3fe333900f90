// POST /api/attachments/[id]/step-fit (issue 10, item 2): a CSV attachment read as a step test and fitted to a
// first-order-plus-dead-time model both ways (shared/calc/step-fit.ts). Nothing is stored: the engineer inserts the
// chosen fit as a plant block, which the sheet's save records.
import { createError } from 'h3'
import { fitStepTest } from '../../shared/calc/step-fit'
import { StepTestError, readStepRecord, recordHeaders } from '../../shared/calc/step-test'
import type { StepFitAnswer, StepFitBody, StepFitRefusal } from '../../shared/schemas/step-test'
import type { Database } from '../utils/db'
import { downloadAttachment } from './attachments'
import type { ObjectStore } from './object-store'
import { isRefused, type Refused, type Viewer } from './sheets'
import { useObjectStore } from '../utils/object-store'

/**
 * Samples a record may hold. Parse and fit run on the request's own thread: 100,000 rows take about 0.9 s
 * (scripts/bench-step-fit.ts, median on the shared 2-core machine), so 200,000 stay near 2 s.
 */
export const MAX_STEP_TEST_ROWS = 200_000

function refusedRecord(refusal: StepFitRefusal): never {
  throw createError({ statusCode: 400, statusMessage: 'The record cannot be fitted', message: refusal.message, data: refusal })
}

/** Line breaks in the bytes, counted before any parsing so an oversized record costs nothing. */
function lineCount(bytes: Buffer): number {
  let count = 0
  let at = bytes.indexOf(10)
  while (at !== -1) {
    count++
    at = bytes.indexOf(10, at + 1)
  }
  return count
}

export async function fitAttachment(db: Database, attachmentId: number, body: StepFitBody, viewer: Viewer, store: ObjectStore = useObjectStore()): Promise<StepFitAnswer | Refused> {
  const file = await downloadAttachment(db, attachmentId, viewer, store)
  if (isRefused(file)) return file
  // Plain text too: a record with comment lines has rows of uneven width, which the upload's content check calls text.
  if (file.type !== 'text/csv' && file.type !== 'text/plain') {
    const message = `${file.name} is not CSV data: a step test is a CSV of time, controller output and process value`
    throw createError({ statusCode: 415, statusMessage: 'Not a step-test record', message, data: { field: 'attachment', row: null, message, headers: [] } })
  }
  if (lineCount(file.bytes) > MAX_STEP_TEST_ROWS + 1)
    refusedRecord({ field: 'file', row: null, message: `${file.name} has more than ${MAX_STEP_TEST_ROWS.toLocaleString('en')} rows: decimate the record before uploading it`, headers: [] })
  const text = file.bytes.toString('utf8')
  try {
    const record = readStepRecord(text, { columns: body.columns, sampleTime: body.sampleTime, timeUnit: body.timeUnit })
    const fit = fitStepTest(record, { stepTime: body.stepTime })
    return {
      attachment: { id: file.id, name: file.name, size: file.size, sha256: file.sha256 },
      record: {
        samples: record.t.length,
        headers: record.headers,
        columns: record.columns,
        sampleTime: record.sampleTime,
        sampleTimeFrom: record.sampleTimeFrom,
        timeUnit: record.timeUnit,
        duration: record.t[record.t.length - 1]!,
      },
      ...fit,
    }
  } catch (error) {
    if (error instanceof StepTestError) refusedRecord({ field: error.field, row: error.row, message: error.message, headers: recordHeaders(text) })
    throw error
  }
}
