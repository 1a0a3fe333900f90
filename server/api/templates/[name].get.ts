import { z } from 'zod'
import { templateNameSchema } from '../../../shared/schemas/sheets'

// A template's name is its file name in sheets/ without `.json`: nothing that could walk out of the folder.
const templateParams = z.object({ name: templateNameSchema })

/** GET /api/templates/[name]: one template as stored, a whole sheet (`SheetTemplate` of shared/schemas/sheets.ts). */
export default defineEventHandler(async (event) => {
  await requireRole(event)
  const { name } = await getValidatedRouterParams(event, parseWith(templateParams))
  const template = await readTemplateFile(name)
  if (template === null) throw createError({ statusCode: 404, statusMessage: 'No such template' })
  return template
})
