export default defineEventHandler(async () => {
  await useDb().raw('SELECT 1')
  return { status: 'ok' }
})
