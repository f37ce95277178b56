import { loadEnv } from './lib/env.mjs'
import { prepareDatabase } from './lib/database.mjs'
import { log } from './lib/run.mjs'

const env = loadEnv()
const db = await prepareDatabase(env, env.TERCET_DB_NAME || 'tercet')
log(`MariaDB is up on 127.0.0.1:${db.port}, database ${db.database}`)
