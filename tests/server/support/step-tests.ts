// Step-test records for the server tests: an invented plant's sampled step response with seeded noise
// (scripts/lib/synthetic-step-test.ts), uploaded as a CSV attachment through POST /api/sheets/[id]/attachments.
import { type SyntheticStepTest, sampleStepTest, syntheticStepCsv } from '../../../scripts/lib/synthetic-step-test'
import type { Client } from './client'

/** Uploads `text` as the file `name` to the sheet's current revision (Client.upload); answers the status and body. */
export async function uploadText(client: Client, sheetId: number, name: string, text: string | Uint8Array): Promise<{ status: number; body: any }> {
  const bytes = typeof text === 'string' ? new TextEncoder().encode(text) : text
  return client.upload(`/api/sheets/${sheetId}/attachments`, name, bytes)
}

/** The sample step test as an attachment of the sheet; answers its id. */
export async function uploadStepTest(client: Client, sheetId: number, spec: SyntheticStepTest = sampleStepTest, name = 'step-test.csv'): Promise<number> {
  // No comment line: the upload's content check takes rows of one width only as CSV.
  const made = await uploadText(client, sheetId, name, syntheticStepCsv(spec))
  if (made.status !== 201) throw new Error(`uploading a step test answered ${made.status}: ${JSON.stringify(made.body)}`)
  return made.body.id as number
}
