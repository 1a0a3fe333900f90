/** POST /api/calculate: a loop file in, the contract's result out (calc-contract.md). */
export default defineEventHandler(async (event) => {
  await requireRole(event)
  const text = (await readRawBody(event, 'utf8')) ?? ''
  const reply = await calculateInPool(text)
  if (reply.ok) return reply.result
  if (reply.kind === 'input') {
    throw createError({ statusCode: 400, statusMessage: 'Bad loop file', message: reply.message, data: { field: reply.field, message: reply.message } })
  }
  if (reply.kind === 'timeout') {
    throw createError({ statusCode: 422, statusMessage: 'Computation stopped', message: reply.message, data: { message: reply.message } })
  }
  throw createError({ statusCode: 500, statusMessage: 'Computation failed', message: reply.message, data: { message: reply.message } })
})
