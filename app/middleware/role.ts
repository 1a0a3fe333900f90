// A page that declares `roles` opens only for a person holding one of them; others get
// the refusal page (app/error.vue, status 403). This is a courtesy of the screen: the
// server refuses the page's API calls on its own and writes each refusal to the audit trail.
export default defineNuxtRouteMiddleware((to) => {
  const wanted = to.meta.roles
  if (!wanted?.length) return
  const { hasRole } = useCurrentPerson()
  if (!hasRole(...wanted)) {
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
