import { describe, expect, it } from 'vitest'
import { baseUrl } from '../support/http'
import { stationTokens } from '../support/stations'

const head = (path: string, headers: Record<string, string> = {}) => fetch(baseUrl() + path, { method: 'HEAD', headers, redirect: 'manual' })

describe('HEAD on API routes', () => {
  it('answers as the GET would, without a body, under the same access rules', async () => {
    const health = await head('/api/health')
    expect(health.status).toBe(200)
    expect(health.headers.get('content-type')).toMatch(/application\/json/)
    expect(await health.text()).toBe('')

    const anonymous = await head('/api/lots')
    expect(anonymous.status).toBe(401)
    expect(anonymous.headers.get('content-type')).toMatch(/application\/problem\+json/)

    const station = await head('/api/products', { authorization: `Bearer ${stationTokens()['ATE-T3-01']}` })
    expect(station.status).toBe(200)

    const unknown = await head('/api/no-such-thing')
    expect(unknown.status).toBe(404)
    expect(unknown.headers.get('content-type')).toMatch(/application\/problem\+json/)
  })
})
