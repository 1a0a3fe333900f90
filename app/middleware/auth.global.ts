// Signed-out people see only the pages that declare `public: true` (sign-in, invitation).
export default defineNuxtRouteMiddleware((to) => {
  const { loggedIn } = useUserSession()
  if (to.meta.public) {
    if (loggedIn.value && to.path === '/sign-in') return navigateTo('/')
    return
  }
  // The print view opened by the PDF renderer carries a render token; its data route checks the token itself.
  if (to.meta.renderable && typeof to.query.render === 'string') return
  if (!loggedIn.value) {
    const next = to.fullPath !== '/' ? { next: to.fullPath } : undefined
    return navigateTo({ path: '/sign-in', query: next })
  }
})
