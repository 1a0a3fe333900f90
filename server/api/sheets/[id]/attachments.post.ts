import { uploadAttachment, type IncomingFile } from '../../../services/attachments'

/**
 * POST /api/sheets/[id]/attachments: multipart/form-data with one file in the field `file`, attached to the sheet's
 * current revision (a draft or returned). 201 `{ id, name, size, sha256, type }`; 400/413/415 naming `file` for a file
 * refused (its name, emptiness, size, content); 409 when the revision is not a draft; 503 when the store fails.
 */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const file = await fileOf(event)
  const made = await unlessRefused(event, await uploadAttachment(useDb(), id, file, viewer, auditContext(event, viewer.id)))
  setResponseStatus(event, 201)
  return made
})

function noFile(message: string): never {
  throw createError({ statusCode: 400, statusMessage: 'No file', message, data: { field: 'file', message } })
}

/** The one file of the field `file`. The platform's own multipart parser (h3's splits a name at `;` and `=`). */
async function fileOf(event: Parameters<typeof readFormData>[0]): Promise<IncomingFile> {
  const form = await readFormData(event).catch(() => noFile('The body is not a well-formed multipart form'))
  const files = form.getAll('file')
  if (files.length === 0) noFile('Choose a file to attach (the form field `file`)')
  if (files.length > 1) noFile('Attach one file per request')
  const [file] = files
  if (typeof file === 'string' || !file) noFile('The field `file` must hold a file, not text')
  return { name: file.name, bytes: Buffer.from(await file.arrayBuffer()) }
}
