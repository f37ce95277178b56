export default defineNitroPlugin((nitro) => {
  nitro.hooks.hook('close', async () => { await closeDb() })
})
