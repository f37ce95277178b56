import { verifyCertificate } from '../../services/certificates/documents'
import { underRules } from '../../services/rule-error'

// Public: anyone holding a certificate may check it, a limited number of times a minute per address.
export default defineEventHandler(async (event) => {
  await enforceRequestLimit(event, verifyLimit())
  setResponseHeader(event, 'Cache-Control', 'no-store')
  return underRules(() => verifyCertificate(useDb(), getRouterParam(event, 'code') ?? ''))
})
