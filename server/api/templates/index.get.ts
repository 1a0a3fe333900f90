/** GET /api/templates: the loop templates of sheets/ an engineer may start from, as `{ name, title }`. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'engineer', 'checker', 'admin')
  // sheets/ is bundled as the Nitro server asset `sheets` (nuxt.config.ts), so the built app needs no source tree.
  const storage = useStorage('assets:sheets')
  const keys = (await storage.getKeys()).filter((key) => key.endsWith('.json')).sort()
  return Promise.all(
    keys.map(async (key) => {
      const loop = (await storage.getItem(key)) as { title?: string } | null
      const name = key.slice(0, -'.json'.length)
      return { name, title: loop?.title ?? name }
    }),
  )
})
