import type { FloorLotsEvent, FloorLotView, FloorRunEvent, FloorSnapshot, FloorStationView, FloorStationsEvent } from '#shared/types/floor'

// more than a 1080-line wall monitor shows: the list is cut by the screen, not by the count
const FEED_LENGTH = 16

/** Newest arrival first: by the time Tercet took each run, then by id (the order it was stored). */
function byArrival(a: FloorRunEvent, b: FloorRunEvent): number {
  return a.receivedAt < b.receivedAt ? 1 : a.receivedAt > b.receivedAt ? -1 : b.id - a.id
}

/**
 * The floor: a snapshot for first paint, then the server's event stream (new runs, lots and stations after them),
 * reconnecting when the server refuses. `now` ticks every second on the server's clock.
 */
export async function useFloorStream() {
  const stations = ref<FloorStationView[]>([])
  const lots = ref<FloorLotView[]>([])
  const feed = ref<FloorRunEvent[]>([])
  const fresh = ref(new Set<number>())
  const link = ref<'connecting' | 'live' | 'reconnecting'>('connecting')
  // Ages are counted on the server's clock: the wall monitor's own clock may be off.
  const skewMs = ref(0)
  const now = ref(Date.now())

  function applySnapshot(s: FloorSnapshot) {
    skewMs.value = new Date(s.serverTime).getTime() - Date.now()
    stations.value = s.stations
    lots.value = s.lots
    const known = new Set(s.recent.map((r) => r.id))
    feed.value = [...s.recent, ...feed.value.filter((r) => !known.has(r.id))].sort(byArrival).slice(0, FEED_LENGTH)
  }

  function addRun(r: FloorRunEvent) {
    if (feed.value.some((x) => x.id === r.id)) return
    feed.value = [r, ...feed.value].sort(byArrival).slice(0, FEED_LENGTH)
    fresh.value = new Set([...fresh.value, r.id])
    setTimeout(() => { const next = new Set(fresh.value); next.delete(r.id); fresh.value = next }, 4000)
    const s = stations.value.find((x) => x.name === r.station)
    if (s && (!s.lastRun || s.lastRun.finishedAt <= r.finishedAt)) {
      s.lastRun = { id: r.id, verdict: r.verdict, finishedAt: r.finishedAt, serial: r.serial, lot: r.lot, step: r.step }
    }
  }

  let source: EventSource | null = null
  // the feed's position (the last event id): a new stream started after the old one was refused goes on from it
  let after = ''
  let retry: ReturnType<typeof setTimeout> | undefined
  let clock: ReturnType<typeof setInterval> | undefined
  const read = <T>(e: Event) => JSON.parse((e as MessageEvent).data) as T

  function connect() {
    source?.close()
    const es = new EventSource(after ? `/api/floor/stream?after=${encodeURIComponent(after)}` : '/api/floor/stream')
    source = es
    es.onopen = () => { link.value = 'live' }
    const keep = (e: Event) => { const id = (e as MessageEvent).lastEventId; if (id) after = id }
    es.addEventListener('snapshot', (e) => { keep(e); applySnapshot(read<FloorSnapshot>(e)); link.value = 'live' })
    es.addEventListener('run', (e) => { keep(e); addRun(read<FloorRunEvent>(e)) })
    es.addEventListener('lots', (e) => { lots.value = read<FloorLotsEvent>(e).lots })
    es.addEventListener('stations', (e) => { stations.value = read<FloorStationsEvent>(e).stations })
    es.onerror = () => {
      link.value = 'reconnecting'
      // The browser retries by itself unless the server refused outright (closed state): then start over.
      if (es.readyState === EventSource.CLOSED) {
        clearTimeout(retry)
        retry = setTimeout(connect, 5000)
      }
    }
  }

  // hooks before the await: after it the component instance is no longer current
  onMounted(() => {
    connect()
    clock = setInterval(() => { now.value = Date.now() + skewMs.value }, 1000)
  })
  onBeforeUnmount(() => {
    source?.close()
    clearTimeout(retry)
    clearInterval(clock)
  })

  const { data: first, status, error } = await useFetch<FloorSnapshot | null>('/api/floor/snapshot', { key: 'floor-snapshot', default: () => null })
  if (first.value) {
    stations.value = first.value.stations
    lots.value = first.value.lots
    feed.value = [...first.value.recent].sort(byArrival).slice(0, FEED_LENGTH)
    skewMs.value = new Date(first.value.serverTime).getTime() - Date.now()
    now.value = Date.now() + skewMs.value
  }

  return { status, error, stations, lots, feed, fresh, link, now }
}
