import { certificateDocument } from '../../services/certificates/documents'

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  // the route's one segment is "<number>.pdf"
  const segment = decodeURIComponent(event.path.split('?')[0]!.split('/').pop() ?? '')
  const number = segment.replace(/\.pdf$/, '')
  const file = await certificateDocument(useDb(), certificateFonts, number, customerScope(user))
  const etag = `"${file.sha256}"`
  setResponseHeaders(event, {
    'Content-Type': 'application/pdf',
    'Content-Disposition': `attachment; filename="${file.number.replace(/[^A-Za-z0-9._-]+/g, '_')}.pdf"`,
    'ETag': etag,
    'X-Content-Type-Options': 'nosniff',
    'Cache-Control': 'private, no-cache',
  })
  if (getHeader(event, 'if-none-match') === etag) {
    setResponseStatus(event, 304)
    return null
  }
  return file.pdf
})
