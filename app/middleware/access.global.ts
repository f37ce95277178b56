import { canOpenPage, isPublicPage, LANDING } from '#shared/utils/roles'

// Navigation only: the server decides what each role may read.
export default defineNuxtRouteMiddleware((to) => {
  const { loggedIn, user } = useUserSession()
  if (to.path === '/login' || isPublicPage(to.path)) return
  if (!loggedIn.value || !user.value) return navigateTo({ path: '/login', query: to.fullPath !== '/' ? { next: to.fullPath } : {} })
  if (to.path === '/') return navigateTo(LANDING[user.value.role])
  if (!canOpenPage(user.value.role, to.path)) return navigateTo(LANDING[user.value.role])
})
