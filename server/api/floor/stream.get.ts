import type { EventStream } from 'h3'
import type { FloorLotsEvent, FloorRunEvent, FloorSnapshot, FloorStationsEvent } from '../../../shared/types/floor'
import { floorLotYields, floorSnapshot, floorStationView, pollRuns, resumeCursor } from '../../services/analytics/floor'
import { cursorText, parseCursorText, type FeedCursor } from '../../services/analytics/floor-cursor'
import { trackStream } from '../../services/analytics/floor-streams'
import { sessionStillValid } from '../../utils/session'
import { databaseFaults } from '../../utils/database-faults'

const POLL_MS = 2000
const HEARTBEAT_MS = 15_000
const RETRY_MS = 3000

// h3's push() only writes data events; an SSE comment keeps proxies and the socket awake without waking listeners.
function pushComment(stream: EventStream, text: string): void {
  const s = stream as unknown as { _writer?: WritableStreamDefaultWriter<Uint8Array>; _writerIsClosed?: boolean }
  if (!s._writer || s._writerIsClosed) return
  s._writer.write(new TextEncoder().encode(`: ${text}\n\n`)).catch(() => {})
}

export default defineEventHandler((event) => {
  const db = useDb()
  const user = event.context.user!
  // ?once=1 sends the snapshot and ends the stream, for tools that cannot hold a connection open.
  const once = getQuery(event).once === '1'
  // a client that lost its stream (the instance behind it gone) comes back with the last event id it received, which
  // the browser sends as Last-Event-ID (or the page as ?after= when it starts a new stream): the feed goes on from there
  const resumeFrom = parseCursorText(getHeader(event, 'last-event-id') ?? getQuery(event).after)
  const stream = createEventStream(event)
  let closed = false
  let poll: ReturnType<typeof setTimeout> | undefined
  let beat: ReturnType<typeof setInterval> | undefined
  let cursor: FeedCursor

  const untrack = trackStream(() => { stream.close() })
  const stop = () => {
    closed = true
    clearTimeout(poll)
    clearInterval(beat)
    untrack()
  }
  stream.onClosed(stop)
  event.node.res.on('close', () => { stop(); stream.close() })

  // each event's data is typed by the shared contract the floor page reads
  type Events = { run: FloorRunEvent; lots: FloorLotsEvent; stations: FloorStationsEvent }
  const send = <K extends keyof Events>(name: K, data: Events[K], id?: string) =>
    stream.push({ event: name, data: JSON.stringify(data), ...(id !== undefined ? { id } : {}) })

  const tick = async () => {
    if (closed) return
    try {
      const next = await pollRuns(db, cursor)
      cursor = next.cursor
      if (next.runs.length && !closed) {
        for (const r of next.runs) await send('run', r.run, r.eventId)
        const [lots, stations] = await Promise.all([floorLotYields(db), floorStationView(db, new Date())])
        await send('lots', { lots })
        await send('stations', { stations })
      }
    } catch (e) {
      // the database away: the fault log notes it once and the next poll tries again; the wall keeps its last view
      if (!databaseFaults.fault('floor stream', e)) console.error('floor stream poll failed', e)
    }
    if (!closed) poll = setTimeout(tick, POLL_MS)
  }

  // Writes wait for the reader, so the first events go out only after send() has handed the stream to the response.
  setImmediate(async () => {
    try {
      const first = await floorSnapshot(db)
      cursor = resumeFrom ? await resumeCursor(db, resumeFrom) : first.cursor
      await stream.push({ event: 'snapshot', data: JSON.stringify(first.snapshot satisfies FloorSnapshot), retry: RETRY_MS, id: cursorText(cursor) })
      if (once) { await stream.close(); return }
    } catch (e) {
      // the browser's EventSource connects again after the retry delay
      if (!databaseFaults.fault('floor stream', e)) console.error('floor stream snapshot failed', e)
      await stream.close()
      return
    }
    if (closed) return
    beat = setInterval(async () => {
      // a session ended meanwhile (disabled, password changed, signed out everywhere) ends the stream too
      if (!(await sessionStillValid(user.id, user.sessionVersion).catch(() => false))) { await stream.close(); return }
      pushComment(stream, 'heartbeat')
    }, HEARTBEAT_MS)
    poll = setTimeout(tick, POLL_MS)
  })

  return stream.send()
})
