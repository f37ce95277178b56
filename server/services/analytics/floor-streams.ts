// Open floor streams, so a shutting-down server can end them at once instead of waiting on them.
const open = new Set<() => void>()

export function trackStream(close: () => void): () => void {
  open.add(close)
  return () => open.delete(close)
}

export function closeAllStreams(): number {
  const n = open.size
  for (const close of [...open]) close()
  open.clear()
  return n
}

export function openStreamCount(): number {
  return open.size
}
