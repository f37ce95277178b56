// A keep-alive HTTP client for the hostile-input suite: raw bodies, any headers, and the checks every answer must pass.
import http from 'node:http'
import { readFileSync } from 'node:fs'
import { inject } from 'vitest'

// idle sockets are closed after 4 s, before the server's own keep-alive timeout (5 s) could close one under a request
const agent = new http.Agent({ keepAlive: true, maxSockets: 16, timeout: 4000 })

export type RawReply = { status: number; contentType: string; text: string; headers: http.IncomingHttpHeaders }

/** `early`: the declared length is past the server's limit, so its answer may come before the body is sent. */
export type RawRequest = { method: string; path: string; headers?: Record<string, string>; body?: Buffer | string; early?: boolean }

/**
 * Sends one request over the shared keep-alive agent. A server may answer 413 before it has read a body past its
 * limit and close the connection while we still write: the answer it sent counts, the write error does not. A request
 * marked `early` sends its headers and waits up to 5 s for that answer before it sends the body, as a client
 * expecting 100-continue would, so the answer is read whatever the server then does with the connection.
 * An endless stream (text/event-stream) is cut once its status and headers have arrived.
 */
export async function send(req: RawRequest, timeoutMs = 60_000): Promise<RawReply> {
  try {
    return await sendOnce(req, timeoutMs)
  } catch (e) {
    // a kept-alive socket the server closed as we took it: the request never reached the server, so it is sent again
    // (Node's documented pattern for request.reusedSocket)
    if ((e as { reused?: boolean }).reused) return sendOnce(req, timeoutMs)
    throw e
  }
}

function sendOnce(req: RawRequest, timeoutMs: number): Promise<RawReply> {
  const url = new URL(inject('baseUrl') + req.path)
  const body = req.body === undefined ? undefined : Buffer.isBuffer(req.body) ? req.body : Buffer.from(req.body, 'utf8')
  const headers: Record<string, string> = { accept: 'application/json', ...req.headers }
  if (body && !Object.keys(headers).some((k) => k.toLowerCase() === 'content-length' || k.toLowerCase() === 'transfer-encoding')) headers['content-length'] = String(body.length)
  return new Promise((resolve, reject) => {
    let reply: RawReply | undefined
    let sent = false
    let gotAnswer = false
    const r = http.request({ host: url.hostname, port: url.port, path: url.pathname + url.search, method: req.method, headers, agent, timeout: timeoutMs }, (res) => {
      gotAnswer = true
      const contentType = String(res.headers['content-type'] ?? '')
      if (contentType.startsWith('text/event-stream')) {
        reply = { status: res.statusCode ?? 0, contentType, text: '', headers: res.headers }
        res.destroy()
        r.destroy()
        resolve(reply)
        return
      }
      const chunks: Buffer[] = []
      res.on('data', (c: Buffer) => chunks.push(c))
      res.on('end', () => {
        reply = { status: res.statusCode ?? 0, contentType, text: Buffer.concat(chunks).toString('utf8'), headers: res.headers }
        resolve(reply)
        if (!sent) r.destroy()
      })
      res.on('error', (e) => { if (!reply) reject(e) })
    })
    r.on('timeout', () => r.destroy(new Error(`no answer within ${timeoutMs} ms: ${req.method} ${req.path.slice(0, 120)}`)))
    r.on('error', (e: NodeJS.ErrnoException) => {
      if (reply) return
      if (r.reusedSocket && !gotAnswer && ['ECONNRESET', 'EPIPE'].includes(e.code ?? '')) Object.assign(e, { reused: true })
      reject(e)
    })
    const finish = () => { if (sent || reply) return; sent = true; if (body) r.end(body); else r.end() }
    if (req.early && body) {
      r.flushHeaders()
      setTimeout(finish, 5000)
    } else finish()
  })
}

/** What is wrong with an answer: a 5xx, or a refusal that is not RFC 9457 problem+json with status, title and detail. */
export function answerFault(r: RawReply): string | undefined {
  if (r.status >= 500) return `answered ${r.status}: ${r.text.slice(0, 300)}`
  if (r.status < 400) return undefined
  if (!r.contentType.startsWith('application/problem+json')) return `answered ${r.status} as ${r.contentType || '(no type)'}`
  let p: any
  try { p = JSON.parse(r.text) } catch { return `answered ${r.status} with a body that is not JSON` }
  if (!p || p.status !== r.status || typeof p.title !== 'string' || !p.title || typeof p.detail !== 'string' || !p.detail) {
    return `answered ${r.status} with an incomplete problem: ${r.text.slice(0, 300)}`
  }
  return undefined
}

/** Runs the tasks with at most `width` in flight. */
export async function inParallel<T>(items: T[], width: number, task: (item: T) => Promise<void>): Promise<void> {
  let next = 0
  const lanes = Array.from({ length: Math.min(width, items.length) }, async () => {
    while (next < items.length) await task(items[next++]!)
  })
  await Promise.all(lanes)
}

/** The test server's resident memory in bytes (Linux /proc). */
export function serverRss(): number {
  const pid = inject('serverPid')
  const m = readFileSync(`/proc/${pid}/status`, 'utf8').match(/^VmRSS:\s+(\d+)\s+kB/m)
  if (!m) throw new Error(`no VmRSS for process ${pid}`)
  return Number(m[1]) * 1024
}

/** Samples the server's memory every 200 ms until stopped; gives the highest reading. */
export function watchRss(): { stop: () => number } {
  let peak = serverRss()
  const timer = setInterval(() => { try { peak = Math.max(peak, serverRss()) } catch { /* gone: the health check says so */ } }, 200)
  return { stop: () => { clearInterval(timer); return Math.max(peak, serverRss()) } }
}

export async function healthy(): Promise<boolean> {
  const r = await send({ method: 'GET', path: '/api/health' })
  return r.status === 200
}
