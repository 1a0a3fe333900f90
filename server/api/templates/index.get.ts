/** GET /api/templates: the sheet templates of sheets/ an engineer may start from, as `TemplateSummary` rows. */
export default defineEventHandler(async (event) => {
  await requireRole(event)
  return listSheetTemplates()
})
