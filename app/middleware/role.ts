// A page that declares `roles` opens only for a person holding one of them; others get
// the refusal page (app/error.vue, status 403). The server refuses the page's API calls on
// its own; the refused page itself is reported to the audit trail here (product.md: every
// failed permission check is recorded).
export default defineNuxtRouteMiddleware(async (to) => {
  const wanted = to.meta.roles
  if (!wanted?.length) return
  const { hasRole } = useCurrentPerson()
  if (!hasRole(...wanted)) {
    // useRequestFetch carries the person's cookie when the page is rendered on the server.
    await useRequestFetch()('/api/audit/page-refusals', { method: 'POST', body: { page: to.path, roles: wanted } }).catch(() => {
      // The refusal stands even when it could not be recorded; the server's own refusals are still audited.
    })
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
