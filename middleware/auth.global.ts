import { roleAtLeast, type Role } from '#shared/utils/roles'

declare module '#app' {
  interface PageMeta {
    /** Pages open to signed-out visitors set `public: true`. */
    public?: boolean
    /** The lowest role that may open the page. */
    role?: Role
  }
}

// Signed-out visitors go to sign-in (and come back afterwards); a page's `role` is checked here for the
// screen and again on the server for its data.
export default defineNuxtRouteMiddleware((to) => {
  const { loggedIn, user } = useUserSession()
  if (to.meta.public) return
  if (!loggedIn.value) return navigateTo({ path: '/sign-in', query: to.fullPath !== '/' ? { redirect: to.fullPath } : {} })
  if (to.meta.role && user.value && !roleAtLeast(user.value.role, to.meta.role)) {
    throw createError({ statusCode: 403, statusMessage: `This screen needs the ${to.meta.role} role.`, fatal: true })
  }
})
