// Checks every template of sheets/ against the sheet schema when the server starts, so a broken template is named
// in the log at once rather than when an engineer first picks it (tests/server/templates.test.ts holds them too).
export default defineNitroPlugin(() => {
  templateProblems()
    .then((problems) => {
      for (const problem of problems) console.error(`[templates] ${problem}`)
    })
    .catch((error: unknown) => console.error('[templates] the templates could not be read:', error))
})
