import { z } from 'zod'

// A template's name is its file name in sheets/ without `.json`: nothing that could walk out of the folder.
const templateParams = z.object({ name: z.string().regex(/^[a-z0-9][a-z0-9-]{0,80}$/) })

/** GET /api/templates/[name]: one template's loop file (calc-contract.md, "Loop file"). */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'engineer', 'checker', 'admin')
  const { name } = await getValidatedRouterParams(event, parseWith(templateParams))
  const loop = await useStorage('assets:sheets').getItem(`${name}.json`)
  if (loop === null) throw createError({ statusCode: 404, statusMessage: 'No such template' })
  return loop
})
