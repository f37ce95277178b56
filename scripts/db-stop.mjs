import { stopMariadb } from './lib/mariadb.mjs'
stopMariadb()
