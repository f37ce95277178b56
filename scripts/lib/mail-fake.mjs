// A local stand-in for an SMTP relay: accepts every message on 127.0.0.1 (no authentication, no TLS) and keeps each as
// the raw .eml beside a parsed .json (from, to, subject, text, html, links, messageId, receivedAt), so a developer or a
// test can read what Tercet sent. Run on its own (`node scripts/lib/mail-fake.mjs <dir>`) or through startMailFake().
import { mkdirSync, writeFileSync } from 'node:fs'
import { resolve } from 'node:path'
import { SMTPServer } from 'smtp-server'
import { simpleParser } from 'mailparser'

const addresses = (a) => (a ? (Array.isArray(a) ? a : [a]).flatMap((x) => x.value.map((v) => v.address)) : [])

/** Every http(s) link in the plain part and every href in the HTML part, once each, in order of appearance. */
export function linksOf(text, html) {
  const found = []
  for (const m of (html || '').matchAll(/href\s*=\s*"([^"]*)"/gi)) found.push(m[1].replace(/&amp;/g, '&'))
  for (const m of (text || '').matchAll(/https?:\/\/[^\s<>"')]+/g)) found.push(m[0])
  return [...new Set(found.filter((l) => /^https?:\/\//i.test(l)))]
}

export async function startMailFake({ port = Number(process.env.TERCET_MAIL_FAKE_PORT || 2525), dir, host = '127.0.0.1' } = {}) {
  mkdirSync(dir, { recursive: true })
  let seq = 0
  const server = new SMTPServer({
    secure: false, authOptional: true, disabledCommands: ['STARTTLS', 'AUTH'], logger: false, banner: 'Tercet local mail catcher',
    onData(stream, session, callback) {
      const chunks = []
      stream.on('data', (c) => chunks.push(c))
      stream.on('end', async () => {
        try {
          const raw = Buffer.concat(chunks)
          const parsed = await simpleParser(raw)
          const receivedAt = new Date()
          const name = `${receivedAt.getTime()}-${process.pid}-${String(++seq).padStart(5, '0')}`
          writeFileSync(resolve(dir, `${name}.eml`), raw)
          const text = parsed.text ?? ''
          const html = typeof parsed.html === 'string' ? parsed.html : ''
          const record = {
            file: `${name}.eml`, messageId: parsed.messageId ?? null, from: addresses(parsed.from)[0] ?? session.envelope.mailFrom?.address ?? null,
            to: addresses(parsed.to), envelopeTo: session.envelope.rcptTo.map((r) => r.address), subject: parsed.subject ?? '', text, html,
            links: linksOf(text, html), receivedAt: receivedAt.toISOString(),
          }
          // the .json is written last and whole, so a reader never sees half a message
          writeFileSync(resolve(dir, `${name}.json.tmp`), JSON.stringify(record, null, 2))
          const { renameSync } = await import('node:fs')
          renameSync(resolve(dir, `${name}.json.tmp`), resolve(dir, `${name}.json`))
          callback()
        } catch (e) { callback(e) }
      })
    },
  })
  await new Promise((done, fail) => {
    server.once('error', fail)
    server.listen(port, host, () => { server.off('error', fail); done() })
  })
  server.on('error', (e) => process.stderr.write(`[tercet] mail catcher: ${e.message}\n`))
  const actual = server.server.address().port
  return { port: actual, dir, close: () => new Promise((done) => server.close(() => done())) }
}

if (process.argv[1] && resolve(process.argv[1]) === resolve(import.meta.filename)) {
  const dir = resolve(process.argv[2] || '.data/mail')
  startMailFake({ dir }).then((f) => {
    process.stdout.write(`[tercet] mail catcher on 127.0.0.1:${f.port}, keeping messages in ${dir}\n`)
    const stop = () => f.close().then(() => process.exit(0))
    process.on('SIGTERM', stop)
    process.on('SIGINT', stop)
    // ends with the process that started it, even when that one is killed outright
    if (process.send) process.on('disconnect', stop)
  }, (e) => {
    process.stderr.write(`[tercet] the mail catcher could not listen on 127.0.0.1:${process.env.TERCET_MAIL_FAKE_PORT || 2525}: ${e.message}. Set TERCET_MAIL_FAKE_PORT to a free port.\n`)
    process.exit(1)
  })
}
