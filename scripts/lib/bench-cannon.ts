// autocannon as the ingest benchmarks drive it: one station token per connection, a fresh body for every request.
import autocannon from 'autocannon'
import { HOST } from './bench-server'

export type CannonResult = {
  duration: number; errors: number; timeouts: number; non2xx: number; '2xx': number
  latency: { p50: number; p99: number }
}

const say = (m: string) => process.stderr.write(`[bench] ${m}\n`)

/** `connections` connections posting `bodies` in turn to `path`, for a time or for an amount of requests. */
export function cannon(port: number, path: string, bodies: Buffer[], tokens: string[], span: { seconds: number } | { amount: number },
  onBody?: (status: number, body: string) => void, connections = 32): Promise<CannonResult & { used: number }> {
  let next = 0
  let nextToken = 0
  let instance: any
  const request = {
    method: 'POST', path,
    // autocannon deep-copies the options per connection, so this object is each connection's own
    conn: {} as { token?: string },
    setupRequest(req: any) {
      req.conn.token ??= tokens[nextToken++ % tokens.length]
      if (next >= bodies.length) { instance?.stop(); next = 0; say('WARNING: bodies ran out; stopping early') }
      const body = bodies[next++]!
      return { ...req, body, headers: { 'content-type': 'application/json', authorization: `Bearer ${req.conn.token}` } }
    },
    ...(onBody ? { onResponse: (status: number, body: string) => onBody(status, body) } : {}),
  }
  return new Promise((done, fail) => {
    const length = 'amount' in span ? { amount: span.amount } : { duration: span.seconds }
    instance = autocannon({ url: `http://${HOST}:${port}`, connections, ...length, timeout: 120, requests: [request] }, (err: Error | null, r: CannonResult) => {
      if (err) fail(err)
      else done({ ...r, used: next })
    })
  })
}

/** Counts the runs a batch answer says were stored (201 new, 200 replayed) and refused; for cannon's onBody. */
export function batchTally(): { stored: number; refused: number; onBody: (status: number, body: string) => void } {
  const t = {
    stored: 0, refused: 0,
    onBody(status: number, body: string) {
      if (status !== 200) return
      for (const m of body.matchAll(/"status":(\d{3})/g)) { if (m[1] === '201' || m[1] === '200') t.stored++; else t.refused++ }
    },
  }
  return t
}
