import { sheetSaveSchema } from '../../../shared/schemas/sheets'
import { saveSheet } from '../../services/sheets'

/**
 * PATCH /api/sheets/[id]: saves the current revision and recomputes it. 409 with `data.current` when `version` is
 * stale; 400 with `data.field` when the schema or the engine refuses the document; 422 at the engine's time limit.
 */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseNamingField(sheetSaveSchema))
  return unlessRefused(event, await saveSheet(useDb(), id, body, viewer, auditContext(event, viewer.id), (text) => calculateInPool(text, String(viewer.id))))
})
