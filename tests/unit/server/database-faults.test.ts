import { describe, expect, it } from 'vitest'
import { DatabaseFaultLog, faultSummary } from '../../../server/utils/database-faults'
import { isDatabaseUnavailable } from '../../../server/utils/database-unavailable'
import { loggablePath, requestIdFrom, requestLogLine } from '../../../server/utils/request-log'

// Shapes as mysql2 3.x, knex 3.x and h3 build them (the integration test database-faults.test.ts takes real ones
// from a cut connection); Node's socket errors carry `code` and a negative `errno`.
const sqlError = (code: string, errno: number, message: string, fatal = false) => Object.assign(new Error(message), { code, errno, sqlState: 'HY000', fatal })
const socketError = (code: string, syscall: string) => Object.assign(new Error(`${syscall} ${code}`), { code, errno: -32, syscall })

describe('isDatabaseUnavailable', () => {
  it.each([
    ['a write to a cut socket', socketError('EPIPE', 'write')],
    ['a reset connection', socketError('ECONNRESET', 'read')],
    ['a refused connection', socketError('ECONNREFUSED', 'connect')],
    ['the server closing the connection', sqlError('PROTOCOL_CONNECTION_LOST', 0, 'Connection lost: The server closed the connection.', true)],
    ['a handshake that timed out', sqlError('PROTOCOL_SEQUENCE_TIMEOUT', 0, 'Query inactivity timeout', true)],
    ['a server shutting down', sqlError('ER_SERVER_SHUTDOWN', 1053, 'Server shutdown in progress')],
    ['a killed connection (MariaDB)', sqlError('ER_CONNECTION_KILLED', 1927, 'Connection was killed')],
    ['too many connections', sqlError('ER_CON_COUNT_ERROR', 1040, 'Too many connections')],
    ['a lock wait timeout', sqlError('ER_LOCK_WAIT_TIMEOUT', 1205, 'Lock wait timeout exceeded; try restarting transaction')],
    ['a deadlock or a Galera certification failure left after the retries', sqlError('ER_LOCK_DEADLOCK', 1213, 'Deadlock found when trying to get lock; try restarting transaction')],
    // MariaDB Galera's answer on a node outside the primary component (the MariaDB knowledge base, "WSREP has not yet prepared node")
    ['a Galera node not ready for clients', sqlError('ER_UNKNOWN_COM_ERROR', 1047, 'WSREP has not yet prepared node for application use')],
    ['the same carrying only its number', Object.assign(new Error('WSREP has not yet prepared node for application use'), { errno: 1047 })],
    ['a command on a closed connection', new Error("Can't add new command when connection is in closed state")],
    ['the pool timing out', Object.assign(new Error('Knex: Timeout acquiring a connection. The pool is probably full. Are you missing a .transacting(trx) call?'), { name: 'KnexTimeoutError' })],
    ['any fatal driver error', Object.assign(new Error('something new'), { code: 'SOMETHING_NEW', fatal: true })],
  ])('says yes for %s', (_what, error) => {
    expect(isDatabaseUnavailable(error)).toBe(true)
  })

  it('finds the fault under wrappers: h3 causes, AggregateError, chains of causes', () => {
    const cut = socketError('EPIPE', 'write')
    expect(isDatabaseUnavailable(Object.assign(new Error('[POST] "/api/v1/runs": 500'), { statusCode: 500, cause: cut }))).toBe(true)
    expect(isDatabaseUnavailable(new AggregateError([new Error('first'), socketError('ECONNREFUSED', 'connect')], 'all failed'))).toBe(true)
    expect(isDatabaseUnavailable(new Error('outer', { cause: new Error('middle', { cause: new Error('inner', { cause: cut }) }) }))).toBe(true)
  })

  it.each([
    ['a duplicate key', sqlError('ER_DUP_ENTRY', 1062, "Duplicate entry 'x' for key 'uuid'")],
    ['a syntax error', sqlError('ER_PARSE_ERROR', 1064, 'You have an error in your SQL syntax')],
    ['a missing table', sqlError('ER_NO_SUCH_TABLE', 1146, "Table 'tercet.x' doesn't exist")],
    ['a type error in the code', new TypeError("Cannot read properties of undefined (reading 'id')")],
    ['a refusal of a rule', Object.assign(new Error('The lot is on hold.'), { status: 409, errors: [{ pointer: '/lot', message: 'on hold' }] })],
    ['nothing at all', undefined],
    ['a string', 'ECONNREFUSED'],
  ])('says no for %s', (_what, error) => {
    expect(isDatabaseUnavailable(error)).toBe(false)
  })

  it('does not loop on an error that is its own cause', () => {
    const e: any = new Error('self')
    e.cause = e
    expect(isDatabaseUnavailable(e)).toBe(false)
  })
})

describe('DatabaseFaultLog', () => {
  it('logs an outage once when it starts and once when it ends, with what was refused in between', () => {
    const lines: Record<string, unknown>[] = []
    let now = 1000
    const log = new DatabaseFaultLog((l) => lines.push(l), undefined, 1000, () => now)
    const cut = socketError('ECONNREFUSED', 'connect')
    for (let i = 0; i < 300; i++) expect(log.fault('request', cut)).toBe(true)
    log.fault('batch-run', cut)
    log.fault('sending mail', cut)
    log.fault('sending mail', cut)
    expect(lines).toHaveLength(1)
    expect(lines[0]).toMatchObject({ event: 'database-unavailable', source: 'request', error: 'connect ECONNREFUSED' })
    now = 7500
    log.answered()
    log.answered()
    expect(lines).toHaveLength(2)
    expect(lines[1]).toEqual({ level: 'warn', event: 'database-available', downMs: 6500, answered503: 300, batchRuns503: 1, jobPassesStopped: { 'sending mail': 2 } })
    expect(JSON.stringify(lines)).not.toMatch(/\n\s+at /)
  })

  it('leaves other errors to the caller and logs nothing for them', () => {
    const lines: unknown[] = []
    const log = new DatabaseFaultLog((l) => lines.push(l))
    expect(log.fault('request', new TypeError('bug'))).toBe(false)
    log.answered()
    expect(lines).toEqual([])
  })

  it('ends the outage when its probe finds the database answering again', async () => {
    const lines: Record<string, unknown>[] = []
    let up = false
    const log = new DatabaseFaultLog((l) => lines.push(l), async () => { if (!up) throw socketError('ECONNREFUSED', 'connect') }, 20)
    log.fault('request', socketError('ECONNREFUSED', 'connect'))
    await new Promise((r) => setTimeout(r, 80))
    expect(log.down).toBe(true)
    up = true
    await new Promise((r) => setTimeout(r, 80))
    expect(log.down).toBe(false)
    expect(lines.map((l) => l.event)).toEqual(['database-unavailable', 'database-available'])
  })

  it('summarises the innermost database fault in one line', () => {
    const e = Object.assign(new Error('insert into `runs` … - Connection lost: The server closed the connection.\n    at x'), { code: 'PROTOCOL_CONNECTION_LOST' })
    expect(faultSummary(e)).toBe('PROTOCOL_CONNECTION_LOST: insert into `runs` … - Connection lost: The server closed the connection.')
    expect(faultSummary(new Error('wrapper', { cause: socketError('EPIPE', 'write') }))).toBe('write EPIPE')
  })
})

describe('request log lines', () => {
  it('keep the path and harmless query values, never secrets', () => {
    expect(loggablePath('/api/lots/L-1/summary?from=2026-01-01&step=final')).toBe('/api/lots/L-1/summary?from=2026-01-01&step=final')
    expect(loggablePath('/reset-password/3f9a8c7d6e5b4a39?next=/')).toBe('/reset-password/…?next=%2F')
    expect(loggablePath('/api/x?token=tst_abc&access_token=y&password=p&apiKey=k&code=c&q=ok')).toBe('/api/x?token=…&access_token=…&password=…&apiKey=…&code=…&q=ok')
    expect(loggablePath('/api/auth/password-reset/confirm')).toBe('/api/auth/password-reset/confirm')
  })

  it('are one object of method, path, status, milliseconds and request id', () => {
    const line = requestLogLine({ method: 'POST', url: '/api/v1/runs?token=s3cret', status: 503, startedAt: 100, id: 'req-12345678' }, 112.34)
    expect(line).toEqual({ method: 'POST', path: '/api/v1/runs?token=…', status: 503, ms: 12.3, id: 'req-12345678' })
    expect(JSON.stringify(line)).not.toContain('s3cret')
  })

  it('take a well-formed request id from the proxy in front and make one otherwise', () => {
    expect(requestIdFrom('abc-123-def-456')).toBe('abc-123-def-456')
    expect(requestIdFrom('bad id with spaces')).toMatch(/^[0-9a-f-]{36}$/)
    expect(requestIdFrom(undefined)).toMatch(/^[0-9a-f-]{36}$/)
  })
})
