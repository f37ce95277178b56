import { Readable } from 'node:stream'
import { idParam } from '../../../utils/route-params'
import { readableShipment } from '../../../services/shipments/views'
import { shipmentMeasurementsCsv } from '../../../services/portal/measurements-csv'

/** The measured data of the shipment's units as CSV, streamed; another customer's shipment is "no such shipment". */
export default defineEventHandler(async (event) => {
  const id = idParam(event, 'id', 'shipment')
  const db = useDb()
  const shipment = await readableShipment(db, { customerId: customerScope(requireUser(event)) }, id)
  if (!shipment) throw problem(404, 'No such shipment.')
  setResponseHeader(event, 'Content-Type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'Content-Disposition', `attachment; filename="${shipment.code.replace(/[^A-Za-z0-9._-]/g, '_')}-measurements.csv"`)
  setResponseHeader(event, 'X-Content-Type-Options', 'nosniff')
  setResponseHeader(event, 'Cache-Control', 'no-store')
  return sendStream(event, Readable.from(shipmentMeasurementsCsv(db, shipment.id)))
})
