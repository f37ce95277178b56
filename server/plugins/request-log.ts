import { requestIdFrom, requestLogLine } from '../utils/request-log'

// One JSON line per request on stdout when it ends (TERCET_REQUEST_LOG=off for none).
export default defineNitroPlugin((nitro) => {
  if (process.env.TERCET_REQUEST_LOG === 'off') return
  nitro.hooks.hook('request', (event) => {
    const req = event.node.req
    // the renderer's own calls to the API (server-side fetches of a page) are part of the page's request
    if ('__unenv__' in req) return
    const id = requestIdFrom(req.headers['x-request-id'])
    event.context.requestId = id
    event.node.res.setHeader('X-Request-Id', id)
    const startedAt = performance.now()
    event.node.res.once('close', () => {
      const line = requestLogLine({ method: req.method ?? '', url: req.url ?? '', status: event.node.res.statusCode, startedAt, id })
      process.stdout.write(JSON.stringify(line) + '\n')
    })
  })
})
