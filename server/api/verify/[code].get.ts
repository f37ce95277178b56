import { verifyCertificate } from '../../services/certificates/documents'

// Public: anyone holding a certificate may check it, a limited number of times a minute per address.
export default defineEventHandler(async (event) => {
  await enforceRequestLimit(event, verifyLimit())
  setResponseHeader(event, 'Cache-Control', 'no-store')
  return verifyCertificate(useDb(), getRouterParam(event, 'code') ?? '')
})
