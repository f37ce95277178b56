// The test servers' output (tests/support/server-log.ts keeps it in .data/test-server-logs/<project>/) must never
// show a station token, a password, a session cookie or a bearer credential.
//
// Why this file runs last: tests/support/after-all-sequencer.ts orders files named *.after-all.test.ts after every
// other file of their project, and the e2e project runs its files one at a time, so the log read here holds what
// every other e2e and browser file made the servers print. (A globalSetup teardown would also run last, but vitest
// only logs a teardown's error and does not fail the run or count it.) So that the check holds even when this file
// runs alone, it first sends the secrets through the server itself in ways that end in refusals and errors.
import { readdirSync, readFileSync } from 'node:fs'
import { resolve } from 'node:path'
import { describe, expect, inject, it } from 'vitest'
import { call, DEMO_PASSWORD, freshAddress, signIn } from '../support/http'
import { leaksIn } from '../support/server-log'
import { stationTokens, tripleRun } from '../support/stations'

const pause = (ms: number) => new Promise((r) => setTimeout(r, ms))

describe('server logs', () => {
  it('show no station token, demo password, session cookie value or bearer credential', async () => {
    const tokens = stationTokens()
    const token = Object.values(tokens)[0]!
    const cookie = await signIn('quality@tercet.test')
    // refusals and faults that carry the secrets in: a bad run with a good token, a revoked-looking token,
    // a sign-in with the demo password for an unknown account, a forged cookie, a malformed body with a cookie
    await call('POST', '/api/v1/runs', { token, body: { ...tripleRun(), measurements: 'not a list' } })
    await call('POST', '/api/v1/runs', { token: `${token.slice(0, -4)}AAAA`, body: tripleRun() })
    await call('POST', '/api/auth/login', { body: { email: 'nobody@tercet.test', password: DEMO_PASSWORD }, headers: { 'x-forwarded-for': freshAddress() } })
    await call('GET', '/api/me', { cookie: `${cookie}x` })
    await call('POST', '/api/me/password', { cookie, raw: '{"currentPassword":', headers: { 'x-forwarded-for': freshAddress() } })
    await pause(1000) // the servers' last lines reach the files

    const dir = inject('serverLogDir')
    const files = readdirSync(dir).filter((f) => f.endsWith('.log'))
    expect(files).toContain('main.log')
    const secrets = [
      ...Object.entries(tokens).map(([station, value]) => ({ name: `station token of ${station}`, value })),
      { name: 'demo password', value: DEMO_PASSWORD },
    ]
    const leaks = files.flatMap((f) => leaksIn(readFileSync(resolve(dir, f), 'utf8'), secrets).map((l) => ({ file: f, ...l })))
    expect(leaks).toEqual([])
  })
})
