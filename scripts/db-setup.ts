// Migrates the database named by NUXT_DB_* and, when it is empty and --seed-demo is given, seeds the demo.
import { mkdirSync, writeFileSync } from 'node:fs'
import { resolve } from 'node:path'
import { connectionFromEnv, createKnex } from '../server/database/connection'
import { migrationSource } from '../server/database/migration-source'
import { seedDemoCatalogue } from '../server/database/seeds/demo'
import { seedDemoHistory } from '../server/database/seeds/demo-history'
import { seedDemoAlerts } from '../server/database/seeds/demo-alerts'
import { countUsers } from '../server/database/repositories/users'

async function main() {
  const args = process.argv.slice(2)
  const db = createKnex(connectionFromEnv())
  try {
    const [, applied] = await db.migrate.latest({ migrationSource })
    if (applied.length) console.log(`[tercet] applied ${applied.length} migration(s)`)
    if (args.includes('--seed-demo') && (await countUsers(db)) === 0) {
      console.log('[tercet] seeding the demo scenario…')
      const { stationTokens } = await seedDemoCatalogue(db)
      const tokenFile = args.find((a) => a.startsWith('--tokens='))?.slice(9) ?? resolve(process.cwd(), '.data/demo-station-tokens.json')
      mkdirSync(resolve(tokenFile, '..'), { recursive: true })
      writeFileSync(tokenFile, JSON.stringify(stationTokens, null, 2) + '\n', { mode: 0o600 })
      const runs = await seedDemoHistory(db)
      console.log(`[tercet] demo history: ${runs} test runs`)
      await seedDemoAlerts(db)
    }
  } finally {
    await db.destroy()
  }
}

main().catch((e) => { console.error(e); process.exit(1) })
