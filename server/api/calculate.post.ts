import { MAX_FILE_BYTES } from '../../shared/calc/limits'

/** POST /api/calculate: a loop file in, the contract's result out (calc-contract.md). */
export default defineEventHandler(async (event) => {
  await requireRole(event)
  // A body far past the engine's own 256 KiB limit is refused before it is read into memory.
  const declared = Number(getRequestHeader(event, 'content-length') ?? 0)
  if (declared > 4 * MAX_FILE_BYTES) {
    const message = `file: the loop file is ${(declared / 1024).toFixed(0)} KiB, above the limit of ${MAX_FILE_BYTES / 1024} KiB`
    throw createError({ statusCode: 400, statusMessage: 'Bad loop file', message, data: { field: 'file', message } })
  }
  const text = (await readRawBody(event, 'utf8')) ?? ''
  const reply = await calculateInPool(text)
  if (reply.ok) return reply.result
  if (reply.kind === 'input') {
    throw createError({ statusCode: 400, statusMessage: 'Bad loop file', message: reply.message, data: { field: reply.field, message: reply.message } })
  }
  if (reply.kind === 'timeout') {
    throw createError({ statusCode: 422, statusMessage: 'Computation stopped', message: reply.message, data: { message: reply.message } })
  }
  if (reply.kind === 'busy') {
    throw createError({ statusCode: 503, statusMessage: 'Busy', message: reply.message, data: { message: reply.message } })
  }
  throw createError({ statusCode: 500, statusMessage: 'Computation failed', message: reply.message, data: { message: reply.message } })
})
