/** Every page needs a signed-in user unless it says `definePageMeta({ public: true })`. */
export default defineNuxtRouteMiddleware((to) => {
  if (to.meta.public) return
  const { loggedIn } = useUserSession()
  if (!loggedIn.value) {
    return navigateTo({ path: '/sign-in', query: { redirect: to.fullPath } })
  }
  if (to.meta.admin && useUserSession().user.value?.siteRole !== 'admin') {
    throw createError({ statusCode: 403, statusMessage: 'Only a site administrator can open this page.' })
  }
})
