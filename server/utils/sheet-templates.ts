// The sheet templates of sheets/, bundled as the Nitro server asset `sheets` (nuxt.config.ts), so the built app
// needs no source tree. Each file is a whole sheet (`SheetTemplate`), validated when the server starts
// (server/plugins/sheet-templates.ts).
import { sheetTemplateSchema, type SheetTemplate, type TemplateSummary } from '../../shared/schemas/sheets'

function storage() {
  return useStorage('assets:sheets')
}

async function templateNames(): Promise<string[]> {
  return (await storage().getKeys())
    .filter((key) => key.endsWith('.json'))
    .map((key) => key.slice(0, -'.json'.length))
    .sort()
}

/** The file as stored (what GET /api/templates/[name] answers), or null. */
export async function readTemplateFile(name: string): Promise<unknown | null> {
  return storage().getItem(`${name}.json`)
}

/** The template validated, with the schema's defaults: what a new sheet starts from. */
export async function readSheetTemplate(name: string): Promise<SheetTemplate | null> {
  const file = await readTemplateFile(name)
  return file === null ? null : sheetTemplateSchema.parse(file)
}

export async function listSheetTemplates(): Promise<TemplateSummary[]> {
  return Promise.all(
    (await templateNames()).map(async (name) => {
      const template = (await readTemplateFile(name)) as Partial<SheetTemplate> | null
      return { name, title: template?.title ?? name, loopTag: template?.loopTag ?? '' }
    }),
  )
}

/** Every template's problems, by name: empty when all are sound. */
export async function templateProblems(): Promise<string[]> {
  const problems: string[] = []
  for (const name of await templateNames()) {
    const checked = sheetTemplateSchema.safeParse(await readTemplateFile(name))
    if (!checked.success) {
      for (const issue of checked.error.issues.slice(0, 5)) problems.push(`sheets/${name}.json: ${issue.path.join('.')}: ${issue.message}`)
    }
  }
  return problems
}
