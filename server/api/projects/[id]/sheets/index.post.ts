import { newSheetSchema } from '../../../../../shared/schemas/sheets'
import { createSheet } from '../../../../services/sheets'

/** POST /api/projects/[id]/sheets: a new sheet, blank, from a template or a copy; 201 `{ id, number }`. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseNamingField(newSheetSchema))
  const created = await createSheet(useDb(), id, body, viewer, auditContext(event, viewer.id), {
    compute: (text) => calculateInPool(text, String(viewer.id)),
    readTemplate: readSheetTemplate,
  })
  const answer = await unlessRefused(event, created)
  setResponseStatus(event, 201)
  return answer
})
