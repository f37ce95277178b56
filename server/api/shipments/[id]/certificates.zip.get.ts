import { idParam } from '../../../utils/route-params'
import { readableShipment } from '../../../services/shipments/views'
import { planShipmentZip, shipmentCertificatesZip } from '../../../services/portal/certificates-zip'
import { ensureAllRendered } from '../../../services/certificates/render-job'

/**
 * The shipment's certificates in force as one ZIP, streamed (no Content-Length); X-Tercet-Files and
 * X-Tercet-Expected-Bytes let a page show progress.
 */
export default defineEventHandler(async (event) => {
  const id = idParam(event, 'id', 'shipment')
  const db = useDb()
  const shipment = await readableShipment(db, { customerId: customerScope(requireUser(event)) }, id)
  if (!shipment) throw problem(404, 'No such shipment.')
  const plan = await planShipmentZip(db, shipment.id)
  setResponseHeader(event, 'Content-Type', 'application/zip')
  setResponseHeader(event, 'Content-Disposition', `attachment; filename="${shipment.code.replace(/[^A-Za-z0-9._-]/g, '_')}-certificates.zip"`)
  setResponseHeader(event, 'X-Tercet-Files', String(plan.files))
  setResponseHeader(event, 'X-Tercet-Expected-Bytes', String(plan.expectedBytes))
  setResponseHeader(event, 'Cache-Control', 'no-store')
  // certificates not rendered yet are rendered as their page comes up, so the archive holds every one announced
  const stream = shipmentCertificatesZip(db, shipment.id, async (d, rows) => ensureAllRendered(d, rows.map((r) => r.id), await certificateFonts()))
  // a download given up stops the reading
  event.node.res.once('close', () => { if (!event.node.res.writableFinished) stream.destroy() })
  return sendStream(event, stream)
})
