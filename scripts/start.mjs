// npm start: install what is missing, bring up MariaDB, migrate and seed, build when needed, serve.
import net from 'node:net'
import { readFileSync } from 'node:fs'
import { resolve } from 'node:path'
import { ensureNodeModules } from './lib/deps.mjs'
import { loadEnv, root, serverEnv } from './lib/env.mjs'
import { log, fail, spawnChild } from './lib/run.mjs'

ensureNodeModules()
const { prepareDatabase } = await import('./lib/database.mjs')
const { buildIfChanged } = await import('./lib/build.mjs')
const { startMailFakeIfNeeded } = await import('./lib/mail.mjs')

const env = loadEnv()
const port = Number(env.PORT || 3000)
const host = env.HOST || '127.0.0.1'
// links in e-mail and on certificates point at this server unless the operator names the public address
env.NUXT_PUBLIC_SITE_URL ||= `http://localhost:${port}`

const free = await new Promise((done) => {
  const srv = net.createServer().once('error', () => done(false)).once('listening', () => srv.close(() => done(true)))
  srv.listen(port, host)
})
if (!free) fail(`port ${port} on ${host} is already in use; set PORT to a free port (e.g. PORT=3100 npm start).`)

// TERCET_CLUSTER=1: the three-node Galera cluster and two instances behind HAProxy instead of one of each
const clustered = env.TERCET_CLUSTER === '1'
const cluster = clustered ? (await import('./lib/cluster.mjs')).galeraCluster() : undefined
if (cluster) env.TERCET_DB_PORT = String(cluster.sqlPort)
const db = await prepareDatabase(env, env.TERCET_DB_NAME || 'tercet', { server: cluster })
buildIfChanged()
// without TERCET_SMTP_HOST, mail goes to the local catcher (stopped with this process; see the Outbox page)
const mail = await startMailFakeIfNeeded(env, env.TERCET_DB_NAME || 'tercet')

const signIns = JSON.parse(readFileSync(resolve(root, 'fixtures/demo-sign-ins.json'), 'utf8'))
const server = clustered ? await startClusterApps() : spawnChild(process.execPath, [resolve(root, '.output/server/index.mjs')], {
  cwd: root,
  env: { ...serverEnv(env, db), ...mail.env, PORT: String(port), HOST: host, NODE_ENV: 'production' },
})

/** Two instances on the next ports, HAProxy's HTTP address on PORT; the returned handle stops them all. */
async function startClusterApps() {
  const { startInstance } = await import('./lib/cluster-apps.mjs')
  const ports = [port + 1, port + 2]
  const children = await Promise.all(ports.map((p) => startInstance({ ...serverEnv(env, db), ...mail.env }, p)))
  cluster.startHaproxy({ http: { host, port, backends: ports } })
  log(`two instances on ports ${ports.join(' and ')} behind HAProxy; "npm run cluster:down" stops the cluster and HAProxy`)
  let left = children.length
  const handle = { kill: (sig) => children.forEach((c) => c.kill(sig)), on: (_e, fn) => children.forEach((c) => c.on('exit', () => { if (--left === 0) fn(0) })) }
  return handle
}
setTimeout(() => {
  log(`Tercet is serving at http://${host}:${port}`)
  log(`demo sign-ins, password "${signIns.password}": ${signIns.accounts.join(', ')}`)
  log('station tokens for the demo stations: .data/demo-station-tokens.json')
  log('Ctrl-C stops the server; "npm run db:stop" stops MariaDB.')
}, 1500)
const stop = () => server.kill('SIGTERM')
process.on('SIGINT', stop)
process.on('SIGTERM', stop)
server.on('exit', (code) => { mail.stop(); process.exit(code ?? 0) })
