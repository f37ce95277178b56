import { plantStamp, utcTitle, plantZoneName, type PlantForm } from '~/utils/plant-time'

/**
 * The plant's time zone, loaded once per visit by plugins/plant-time.ts and shared by every page through one state;
 * the settings form updates it when an administrator changes it.
 */
export function usePlantTime() {
  const zone = useState<string>('plant-time-zone', () => 'UTC')
  return {
    zone,
    stamp: (value: string | Date | number | null | undefined, form: PlantForm = 'minute') => plantStamp(value, zone.value, form),
    zoneName: (value: string | Date | number = Date.now()) => plantZoneName(value, zone.value),
    utcTitle,
  }
}
