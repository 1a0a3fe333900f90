// A page that declares `roles` opens only for a person holding one of them; others get
// the refusal page (app/error.vue, status 403). The server refuses the page's API calls on
// its own; the refused page itself is reported to the audit trail here (product.md: every
// failed permission check is recorded).
export default defineNuxtRouteMiddleware(async (to) => {
  const wanted = to.meta.roles
  if (!wanted?.length) return
  const { hasRole } = useCurrentPerson()
  if (!hasRole(...wanted)) {
    if (shouldReport(to.path)) {
      // useRequestFetch carries the person's cookie when the page is rendered on the server. The server records
      // the roles of the session, so none are sent.
      await useRequestFetch()('/api/audit/page-refusals', { method: 'POST', body: { page: to.path } }).catch(() => {
        // The refusal stands even when it could not be recorded; the server's own refusals are still audited.
      })
    }
    return abortNavigation(
      createError({
        statusCode: 403,
        statusMessage: 'Not open to your roles',
        fatal: true,
        data: { page: to.path, roles: wanted },
      }),
    )
  }
})

let lastReport = { page: '', at: 0 }

/**
 * One audit entry per refusal: a page loaded directly was reported by the server's render,
 * so the browser's hydration of it does not report again, nor does a repeat within a few seconds.
 */
function shouldReport(page: string): boolean {
  if (import.meta.server) {
    // Nuxt renders the refusal page through an internal request to /__nuxt_error, which runs the
    // middleware again: the first run has reported it already.
    return !useRequestEvent()?.path.startsWith('/__nuxt_error')
  }
  if (useNuxtApp().isHydrating) return false
  const now = Date.now()
  if (lastReport.page === page && now - lastReport.at < 5_000) return false
  lastReport = { page, at: now }
  return true
}
