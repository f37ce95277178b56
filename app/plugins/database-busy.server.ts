// A page whose data the server could not read because the database was away is answered as the error page with
// 503 and Retry-After (app/error.vue says to try again in a few seconds), not as a page of empty panels with 200.
export default defineNuxtPlugin((nuxtApp) => {
  nuxtApp.hook('app:rendered', () => {
    if (nuxtApp.payload.error) return
    const errors = Object.values(nuxtApp.payload._errors ?? {}) as ({ statusCode?: number } | null | undefined)[]
    if (!errors.some((e) => e?.statusCode === 503)) return
    nuxtApp.ssrContext?.event.node.res.setHeader('Retry-After', '5')
    // the renderer answers a payload error with the error page and its status
    nuxtApp.payload.error = createError({ statusCode: 503, statusMessage: 'Service Unavailable' })
  })
})
