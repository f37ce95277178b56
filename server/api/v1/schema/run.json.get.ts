import { runSchema } from '../../../utils/run-validator'

export default defineEventHandler((event) => {
  setResponseHeader(event, 'Content-Type', 'application/schema+json')
  setResponseHeader(event, 'Cache-Control', 'public, max-age=300')
  return runSchema
})
