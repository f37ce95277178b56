// "Today" on the floor and the station list: the plant day (in the plant's time zone) that `now` falls in.
import type { Knex } from 'knex'
import { plantDayEnd, plantDayStart } from '../../shared/utils/plant-time'
import { plantTimeZone } from './settings'

export type PlantDay = { zone: string; start: Date; end: Date }

export async function plantToday(db: Knex, now = new Date()): Promise<PlantDay> {
  const zone = await plantTimeZone(db)
  return { zone, start: plantDayStart(now, zone), end: plantDayEnd(now, zone) }
}
