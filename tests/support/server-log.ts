// The output of the test servers, kept in files under .data/ as well as shown, so a check after the run can read
// everything they printed (tests/e2e/server-logs.after-all.test.ts).
import type { ChildProcess } from 'node:child_process'
import { closeSync, mkdirSync, openSync, writeSync } from 'node:fs'
import { dirname, resolve } from 'node:path'

/**
 * The folder of one project's server logs, per test database so that two runs side by side keep apart; emptied
 * when its main test server starts.
 */
export function serverLogDir(project: string): string {
  return resolve(process.cwd(), process.env.TERCET_SERVER_LOG_DIR || '.data/test-server-logs', process.env.NUXT_DB_DATABASE || 'tercet_test', project)
}

/**
 * Copies the child's stdout and stderr to this process's own (when `show`) and appends both to `file`. Each chunk
 * is written to the file synchronously as it arrives, so a reader never misses output the server has flushed.
 */
export function teeOutput(child: ChildProcess, file: string, show: { stdout: boolean; stderr: boolean }): void {
  mkdirSync(dirname(file), { recursive: true })
  const fd = openSync(file, 'a')
  let open = 2
  const pipe = (stream: NodeJS.ReadableStream | null, out: NodeJS.WriteStream, visible: boolean) => {
    if (!stream) { open -= 1; return }
    stream.on('data', (chunk: Buffer) => {
      writeSync(fd, chunk)
      if (visible) out.write(chunk)
    })
    stream.on('end', () => { if (--open === 0) closeSync(fd) })
  }
  pipe(child.stdout, process.stdout, show.stdout)
  pipe(child.stderr, process.stderr, show.stderr)
}

export type LogLeak = { what: string; line: number; excerpt: string }

/**
 * Where a server log shows a secret: any of the given secret strings (station tokens, the demo password), a session
 * cookie with a value (`nuxt-session=` followed by a sealed value; an empty clearing is fine), or a bearer credential
 * (`Bearer ` in any case followed by a credential; the placeholder of the 401's own wording, "Bearer <station
 * token>", is not one). The excerpt masks the secret itself.
 */
export function leaksIn(text: string, secrets: { name: string; value: string }[]): LogLeak[] {
  const leaks: LogLeak[] = []
  const lines = text.split('\n')
  lines.forEach((line, i) => {
    for (const s of secrets) {
      if (s.value && line.includes(s.value)) leaks.push({ what: s.name, line: i + 1, excerpt: line.split(s.value).join('<secret>').slice(0, 200) })
    }
    if (/nuxt-session=[^;,\s"'\\]{8,}/.test(line)) leaks.push({ what: 'session cookie', line: i + 1, excerpt: line.replace(/nuxt-session=[^;,\s"'\\]+/g, 'nuxt-session=<secret>').slice(0, 200) })
    if (/bearer\s+[\w.~+/=-]{8,}/i.test(line)) leaks.push({ what: 'bearer credential', line: i + 1, excerpt: line.replace(/(bearer\s+)\S+/gi, '$1<secret>').slice(0, 200) })
  })
  return leaks
}
