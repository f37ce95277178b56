// The floor page's link badge follows its event stream: connecting until the stream opens, live, reconnecting when
// the stream fails (the browser retries by itself), and a fresh stream five seconds after the server closed it.
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { mountSuspended, registerEndpoint } from '@nuxt/test-utils/runtime'
import FloorPage from '~/pages/floor.vue'
import type { FloorSnapshot } from '#shared/types/floor'

/** Stands in for the browser's EventSource: the test opens, fails and closes it by hand. */
class FakeEventSource {
  static readonly CONNECTING = 0
  static readonly OPEN = 1
  static readonly CLOSED = 2
  static made: FakeEventSource[] = []
  readyState = FakeEventSource.CONNECTING
  onopen: ((e: Event) => void) | null = null
  onerror: ((e: Event) => void) | null = null
  private listeners = new Map<string, ((e: Event) => void)[]>()
  constructor(public url: string) { FakeEventSource.made.push(this) }
  addEventListener(type: string, fn: (e: Event) => void) { this.listeners.set(type, [...(this.listeners.get(type) ?? []), fn]) }
  close() { this.readyState = FakeEventSource.CLOSED }
  open() { this.readyState = FakeEventSource.OPEN; this.onopen?.(new Event('open')) }
  /** A dropped connection the browser will retry (CONNECTING), or a refusal that ends the stream (CLOSED). */
  fail(closed: boolean) { this.readyState = closed ? FakeEventSource.CLOSED : FakeEventSource.CONNECTING; this.onerror?.(new Event('error')) }
  emit(type: string, data: unknown, lastEventId = '') { for (const fn of this.listeners.get(type) ?? []) fn(new MessageEvent(type, { data: JSON.stringify(data), lastEventId })) }
}

const snapshot = (): FloorSnapshot => ({
  serverTime: new Date().toISOString(), lastRunId: 0, lots: [], recent: [],
  stations: [{ name: 'BENCH-FLOOR-T1', location: 'Bay 1', lastSeenAt: null, runsToday: 0, lastRun: null }],
})

beforeEach(() => {
  FakeEventSource.made = []
  vi.stubGlobal('EventSource', FakeEventSource)
  registerEndpoint('/api/floor/snapshot', () => snapshot())
})
afterEach(() => {
  vi.useRealTimers()
  vi.unstubAllGlobals()
})

const badge = (w: Awaited<ReturnType<typeof mountSuspended>>) => w.get('[data-test="link-state"]').text()

describe('floor page link badge', () => {
  it('goes connecting → live → reconnecting on a stream error → live again when the browser reconnects', async () => {
    const w = await mountSuspended(FloorPage)
    expect(FakeEventSource.made).toHaveLength(1)
    expect(FakeEventSource.made[0]!.url).toBe('/api/floor/stream')
    expect(badge(w)).toMatch(/^connecting/i)
    const es = FakeEventSource.made[0]!
    es.open()
    await w.vm.$nextTick()
    expect(badge(w)).toMatch(/^live$/i)
    es.fail(false)
    await w.vm.$nextTick()
    expect(badge(w)).toMatch(/^reconnecting/i)
    // the browser's own retry reuses the same EventSource: no second one is made
    es.open()
    await w.vm.$nextTick()
    expect(badge(w)).toMatch(/^live$/i)
    expect(FakeEventSource.made).toHaveLength(1)
    w.unmount()
    expect(es.readyState).toBe(FakeEventSource.CLOSED) // leaving the page closes the stream
  })

  it('opens a new stream five seconds after the server closed it, and is live once that one opens', async () => {
    const w = await mountSuspended(FloorPage)
    const first = FakeEventSource.made[0]!
    first.open()
    vi.useFakeTimers()
    first.fail(true)
    await w.vm.$nextTick()
    expect(badge(w)).toMatch(/^reconnecting/i)
    vi.advanceTimersByTime(4_900)
    expect(FakeEventSource.made).toHaveLength(1)
    vi.advanceTimersByTime(200)
    expect(FakeEventSource.made).toHaveLength(2)
    expect(badge(w)).toMatch(/^reconnecting/i)
    // a snapshot event on the new stream also means the link is up
    FakeEventSource.made[1]!.emit('snapshot', snapshot())
    await w.vm.$nextTick()
    expect(badge(w)).toMatch(/^live$/i)
    w.unmount()
  })

  it('starts the new stream after the last event it received, so the feed goes on where it stopped on any instance', async () => {
    const w = await mountSuspended(FloorPage)
    const first = FakeEventSource.made[0]!
    first.open()
    first.emit('snapshot', snapshot(), '1764700000000.41')
    first.emit('run', {
      id: 44, serial: 'SN-1', part: 'P', lot: 'L', station: 'BENCH-FLOOR-T1', step: 'final', attempt: 1, verdict: 'pass',
      startedAt: '2026-12-02T18:26:00.000Z', finishedAt: '2026-12-02T18:26:30.000Z', receivedAt: '2026-12-02T18:26:40.000Z', failed: 0,
    }, '1764700000500.44')
    vi.useFakeTimers()
    first.fail(true)
    vi.advanceTimersByTime(5_100)
    expect(FakeEventSource.made).toHaveLength(2)
    expect(FakeEventSource.made[1]!.url).toBe('/api/floor/stream?after=1764700000500.44')
    w.unmount()
  })
})
