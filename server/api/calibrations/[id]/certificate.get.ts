import { findCertificate } from '../../../database/repositories/calibration'

export default defineEventHandler(async (event) => {
  const id = idParam(event, 'id', 'calibration record')
  const file = await findCertificate(useDb(), id)
  if (!file) throw problem(404, 'This calibration record has no certificate document.')
  const name = `${(file.certificateNumber ?? `calibration-${id}`).replace(/[^A-Za-z0-9._-]+/g, '_')}.pdf`
  setResponseHeaders(event, {
    'Content-Type': 'application/pdf',
    'Content-Disposition': `attachment; filename="${name}"`,
    'X-Content-Type-Options': 'nosniff',
    'Cache-Control': 'private, no-store',
  })
  return file.pdf
})
