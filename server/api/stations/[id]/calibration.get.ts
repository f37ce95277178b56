import { stationCalibration } from '../../../services/calibration/views'

export default defineEventHandler(async (event) => {
  const view = await stationCalibration(useDb(), idParam(event, 'id', 'station'))
  if (!view) throw problem(404, 'No such station.')
  return view
})
