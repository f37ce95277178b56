import type { FloorRunDetail } from '#shared/types/floor'

/** The run the floor has opened (by id), with its failing parameters; null when none is open. */
export function useFloorRun() {
  const openId = ref<number | null>(null)
  const run = ref<FloorRunDetail | null>(null)
  const loading = ref(false)
  const error = ref<string | null>(null)

  async function open(id: number) {
    openId.value = id
    run.value = null
    error.value = null
    loading.value = true
    try {
      const r = await $fetch<FloorRunDetail>(`/api/floor/runs/${id}`)
      if (openId.value === id) run.value = r
    } catch (e: any) {
      if (openId.value === id) error.value = e?.data?.detail ?? e?.message ?? 'The run could not be read.'
    } finally {
      if (openId.value === id) loading.value = false
    }
  }
  function close() {
    openId.value = null
    run.value = null
    error.value = null
  }
  return { openId, run, loading, error, open, close }
}
