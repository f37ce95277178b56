import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'

const tag = `${Date.now().toString(36)}${process.pid.toString(36)}`.toUpperCase()
type Who = 'admin' | 'quality' | 'engineer' | 'operator'
const cookies: Record<Who, string> = { admin: '', quality: '', engineer: '', operator: '' }
const power = { step: 'final', name: 'output_power', lsl: 5, usl: 9, target: 7, unit: 'dBm', rule: 'guarded', defaultUncertainty: 0.3, key: true }

/** A new product with a draft holding one limit (or none). */
async function draftOf(part: string, limits: unknown[] = [power], cookie = cookies.engineer): Promise<number> {
  expect((await call('POST', '/api/products', { cookie, body: { partNumber: part, name: 'Workflow probe', multiplier: 2, inputHz: 50e6, steps: ['final'] } })).status).toBe(201)
  const draft = await call('POST', `/api/products/${part}/revisions`, { cookie })
  expect(draft.status).toBe(201)
  if (limits.length) expect((await call('PUT', `/api/revisions/${draft.body.id}/limits`, { cookie, body: { limits } })).status).toBe(200)
  return draft.body.id
}

async function audit(id: number, action: string) {
  const r = await call('GET', `/api/audit?entity=spec_revision&entityId=${id}&action=${action}`, { cookie: cookies.admin })
  expect(r.status).toBe(200)
  return r.body.entries
}

const awaiting = async (cookie: string) => (await call('GET', '/api/specs/awaiting-approval', { cookie })).body.revisions as any[]

let secondQuality = { id: 0, cookie: '' }
let otherEngineer = { id: 0, cookie: '' }

beforeAll(async () => {
  for (const who of Object.keys(cookies) as Who[]) cookies[who] = await signIn(ROLE_ACCOUNTS[who])
  for (const [role, slot] of [['quality', 'q'], ['engineer', 'e']] as const) {
    const email = `wf-${slot}-${tag.toLowerCase()}@tercet.test`
    const made = await call('POST', '/api/users', { cookie: cookies.admin, body: { email, name: `Probe ${role} ${tag}`, role, password: 'workflow-probe-pw' } })
    expect(made.status).toBe(201)
    const who = { id: made.body.user.id, cookie: await signIn(email, 'workflow-probe-pw') }
    if (role === 'quality') secondQuality = who
    else otherEngineer = who
  }
})

describe('submitting a draft for approval', () => {
  it('an engineer submits with a note; every quality user but the author sees it awaiting, with part, revision, author, time and note', async () => {
    const id = await draftOf(`WF-${tag}-A`)
    const r = await call('POST', `/api/revisions/${id}/submit`, { cookie: cookies.engineer, body: { note: 'Tighter output power after the new amplifier.' } })
    expect(r.status).toBe(200)
    expect(r.body).toMatchObject({ id, revision: 1, status: 'draft', discardedAt: null })
    for (const cookie of [cookies.quality, secondQuality.cookie]) {
      const row = (await awaiting(cookie)).find((x) => x.id === id)
      expect(row).toMatchObject({ partNumber: `WF-${tag}-A`, revision: 1, author: { name: 'Milo Harrow' }, note: 'Tighter output power after the new amplifier.', reviewer: null, limitCount: 1 })
      expect(Date.parse(row.submittedAt)).toBe(Date.parse(r.body.submittedAt))
    }
    const view = (await call('GET', `/api/revisions/${id}`, { cookie: cookies.quality })).body.revision
    expect(view).toMatchObject({ status: 'draft', submitNote: 'Tighter output power after the new amplifier.', submittedBy: { name: 'Milo Harrow' }, reviewer: null })
    const [entry] = await audit(id, 'submit')
    expect(entry.after).toMatchObject({ submitted: true, note: 'Tighter output power after the new amplifier.', reviewerId: null })
    expect(entry.user.email).toBe(ROLE_ACCOUNTS.engineer)

    const twice = await call('POST', `/api/revisions/${id}/submit`, { cookie: cookies.engineer, body: {} })
    expect(twice.status).toBe(409)
  })

  it('a draft addressed to a named reviewer awaits that reviewer only', async () => {
    const id = await draftOf(`WF-${tag}-B`)
    expect((await call('POST', `/api/revisions/${id}/submit`, { cookie: cookies.admin, body: { reviewerId: secondQuality.id } })).status).toBe(200)
    expect((await awaiting(secondQuality.cookie)).find((x) => x.id === id)?.reviewer).toMatchObject({ id: secondQuality.id })
    expect((await awaiting(cookies.quality)).some((x) => x.id === id)).toBe(false)
  })

  it('a quality author does not see their own submitted draft awaiting them', async () => {
    const id = await draftOf(`WF-${tag}-C`, [power], otherEngineer.cookie)
    expect((await call('POST', `/api/revisions/${id}/submit`, { cookie: otherEngineer.cookie, body: {} })).status).toBe(200)
    expect((await call('PATCH', `/api/users/${otherEngineer.id}`, { cookie: cookies.admin, body: { role: 'quality' } })).status).toBe(200)
    try {
      expect((await awaiting(otherEngineer.cookie)).some((x) => x.id === id)).toBe(false)
      expect((await awaiting(cookies.quality)).some((x) => x.id === id)).toBe(true)
    } finally {
      expect((await call('PATCH', `/api/users/${otherEngineer.id}`, { cookie: cookies.admin, body: { role: 'engineer' } })).status).toBe(200)
    }
  })

  it('refuses an empty draft, an unknown or non-quality reviewer (422 with a pointer) and a malformed body (400), leaving the draft unsubmitted', async () => {
    const empty = await draftOf(`WF-${tag}-D`, [])
    const none = await call('POST', `/api/revisions/${empty}/submit`, { cookie: cookies.engineer, body: {} })
    expect(none.status).toBe(422)
    expect(none.body.detail).toMatch(/without limits/)

    const id = await draftOf(`WF-${tag}-E`)
    const engineerId = (await call('GET', '/api/me', { cookie: cookies.engineer })).body.id
    for (const reviewerId of [999999, engineerId]) {
      const r = await call('POST', `/api/revisions/${id}/submit`, { cookie: cookies.engineer, body: { reviewerId } })
      expect(r.status).toBe(422)
      expect(r.body.errors).toEqual([{ pointer: '/reviewerId', message: 'not an active quality user' }])
    }
    const bad = await call('POST', `/api/revisions/${id}/submit`, { cookie: cookies.engineer, body: { note: 'x'.repeat(501), extra: 1 } })
    expect(bad.status).toBe(400)
    expect((await call('GET', `/api/revisions/${id}`, { cookie: cookies.engineer })).body.revision.submittedAt).toBeNull()
    expect(await audit(id, 'submit')).toEqual([])
    expect((await call('POST', '/api/revisions/999999/submit', { cookie: cookies.engineer, body: {} })).status).toBe(404)
  })

  it('saving new limits takes a submitted draft back to a plain draft, out of the approvers\' list, audited', async () => {
    const id = await draftOf(`WF-${tag}-F`)
    expect((await call('POST', `/api/revisions/${id}/submit`, { cookie: cookies.engineer, body: { note: 'first go' } })).status).toBe(200)
    expect((await awaiting(cookies.quality)).some((x) => x.id === id)).toBe(true)
    expect((await call('PUT', `/api/revisions/${id}/limits`, { cookie: cookies.engineer, body: { limits: [{ ...power, usl: 10 }] } })).status).toBe(200)
    expect((await awaiting(cookies.quality)).some((x) => x.id === id)).toBe(false)
    const view = (await call('GET', `/api/revisions/${id}`, { cookie: cookies.engineer })).body.revision
    expect(view).toMatchObject({ status: 'draft', submittedAt: null, submitNote: null })
    const [entry] = await audit(id, 'limits_replace')
    expect(entry.before.submitNote).toBe('first go')
    expect(entry.after.submittedAt).toBeNull()
    expect((await call('POST', `/api/revisions/${id}/submit`, { cookie: cookies.engineer, body: { note: 'second go' } })).status).toBe(200)
  })
})

describe('approving with a note', () => {
  it('keeps the approval note with the revision; the draft leaves the awaiting list', async () => {
    const id = await draftOf(`WF-${tag}-G`)
    expect((await call('POST', `/api/revisions/${id}/submit`, { cookie: cookies.engineer, body: { note: 'ready' } })).status).toBe(200)
    const ok = await call('POST', `/api/revisions/${id}/approve`, { cookie: cookies.quality, body: { note: 'Checked against the amplifier data sheet.' } })
    expect(ok.status).toBe(200)
    const view = (await call('GET', `/api/revisions/${id}`, { cookie: cookies.engineer })).body.revision
    expect(view).toMatchObject({ status: 'approved', note: 'Checked against the amplifier data sheet.', submitNote: 'ready', approvedBy: { name: 'Rosa Fenwright' } })
    expect((await awaiting(secondQuality.cookie)).some((x) => x.id === id)).toBe(false)
    const [entry] = await audit(id, 'approve')
    expect(entry.after.note).toBe('Checked against the amplifier data sheet.')
    expect(entry.before.submittedAt).not.toBeNull()
    // an approved revision is no longer a draft to submit or discard
    expect((await call('POST', `/api/revisions/${id}/submit`, { cookie: cookies.engineer, body: {} })).status).toBe(409)
    expect((await call('POST', `/api/revisions/${id}/discard`, { cookie: cookies.admin, body: {} })).status).toBe(409)
  })

  it('still approves a draft that was never submitted, and the audit row says it was not', async () => {
    const id = await draftOf(`WF-${tag}-H`)
    expect((await call('POST', `/api/revisions/${id}/approve`, { cookie: cookies.quality, body: {} })).status).toBe(200)
    const [entry] = await audit(id, 'approve')
    expect(entry.before.submittedAt).toBeNull()
    expect(entry.after.note).toBeNull()
  })
})

describe('discarding a draft', () => {
  it('its author discards it with a reason: kept, read-only, unlisted as a draft, audited; a new draft can then be opened', async () => {
    const part = `WF-${tag}-I`
    const id = await draftOf(part)
    expect((await call('POST', `/api/revisions/${id}/submit`, { cookie: cookies.engineer, body: {} })).status).toBe(200)
    const r = await call('POST', `/api/revisions/${id}/discard`, { cookie: cookies.engineer, body: { note: 'Superseded by the new amplifier plan.' } })
    expect(r.status).toBe(200)
    expect(r.body).toMatchObject({ id, status: 'discarded' })

    const view = (await call('GET', `/api/revisions/${id}`, { cookie: cookies.quality })).body
    expect(view.revision).toMatchObject({ status: 'discarded', discardedBy: { name: 'Milo Harrow' }, discardNote: 'Superseded by the new amplifier plan.' })
    expect(view.limits).toHaveLength(1)
    expect((await awaiting(cookies.quality)).some((x) => x.id === id)).toBe(false)
    const overview = (await call('GET', '/api/specs', { cookie: cookies.engineer })).body.products.find((p: any) => p.partNumber === part)
    expect(overview.drafts).toEqual([])
    const [entry] = await audit(id, 'discard')
    expect(entry.after).toMatchObject({ status: 'discarded', note: 'Superseded by the new amplifier plan.' })
    expect(entry.before).toMatchObject({ status: 'draft', submitted: true })

    expect((await call('PUT', `/api/revisions/${id}/limits`, { cookie: cookies.engineer, body: { limits: [power] } })).status).toBe(409)
    expect((await call('POST', `/api/revisions/${id}/submit`, { cookie: cookies.engineer, body: {} })).status).toBe(409)
    expect((await call('POST', `/api/revisions/${id}/approve`, { cookie: cookies.quality, body: {} })).status).toBe(409)
    expect((await call('POST', `/api/revisions/${id}/discard`, { cookie: cookies.engineer, body: {} })).status).toBe(409)

    const next = await call('POST', `/api/products/${part}/revisions`, { cookie: cookies.engineer })
    expect(next.status).toBe(201)
    expect(next.body.revision).toBe(2)
    const list = (await call('GET', `/api/products/${part}/revisions`, { cookie: cookies.engineer })).body.revisions
    expect(list.map((x: any) => [x.revision, x.status])).toEqual([[2, 'draft'], [1, 'discarded']])
  })

  it('another engineer may not discard someone else\'s draft (403, nothing changes); quality and an administrator may', async () => {
    const a = await draftOf(`WF-${tag}-J`)
    const refused = await call('POST', `/api/revisions/${a}/discard`, { cookie: otherEngineer.cookie, body: {} })
    expect(refused.status).toBe(403)
    expect((await call('GET', `/api/revisions/${a}`, { cookie: cookies.engineer })).body.revision.status).toBe('draft')
    expect(await audit(a, 'discard')).toEqual([])
    expect((await call('POST', `/api/revisions/${a}/discard`, { cookie: cookies.quality, body: {} })).status).toBe(200)
    const b = await draftOf(`WF-${tag}-K`)
    expect((await call('POST', `/api/revisions/${b}/discard`, { cookie: cookies.admin, body: {} })).status).toBe(200)
    expect((await call('GET', `/api/revisions/${b}`, { cookie: cookies.engineer })).body.revision).toMatchObject({ status: 'discarded', discardedBy: { name: expect.any(String) }, discardNote: null })
  })
})

describe('roles', () => {
  it('only quality reads the awaiting list; engineers and administrators list the reviewers to address', async () => {
    for (const who of ['admin', 'engineer', 'operator'] as const) expect((await call('GET', '/api/specs/awaiting-approval', { cookie: cookies[who] })).status).toBe(403)
    const reviewers = (await call('GET', '/api/specs/reviewers', { cookie: cookies.engineer })).body.reviewers
    expect(reviewers).toEqual(expect.arrayContaining([expect.objectContaining({ name: 'Rosa Fenwright' }), expect.objectContaining({ id: secondQuality.id })]))
    expect(reviewers.some((r: any) => r.id === otherEngineer.id)).toBe(false)
    expect((await call('GET', '/api/specs/reviewers', { cookie: cookies.quality })).status).toBe(403)
    expect((await call('POST', '/api/revisions/999999/submit', { cookie: cookies.quality, body: {} })).status).toBe(403)
    expect((await call('POST', '/api/revisions/999999/discard', { cookie: cookies.operator, body: {} })).status).toBe(403)
  })
})
