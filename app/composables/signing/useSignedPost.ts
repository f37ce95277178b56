// Actions that must be signed (approve, release, revoke, reissue, calibration impact notices): sent as they are first; when the server asks for
// the password again (422 with `signature: 'required'`), the prompt opens and the same request is sent with it.
export type Signer = ReturnType<typeof useSignedPost>

type Pending = { url: string; body: Record<string, unknown>; resolve: (v: unknown) => void; reject: (e: unknown) => void }

export function useSignedPost() {
  const asking = ref(false)
  const password = ref('')
  const error = ref<string | null>(null)
  const busy = ref(false)
  let pending: Pending | null = null

  async function attempt() {
    const p = pending!
    const typed = password.value
    busy.value = true
    try {
      const r = await $fetch(p.url, { method: 'POST', body: { ...p.body, ...(typed ? { password: typed } : {}) } })
      asking.value = false
      pending = null
      p.resolve(r)
    } catch (e: any) {
      if (e?.data?.signature === 'required') {
        asking.value = true
        error.value = typed ? (e.data.detail ?? 'The password is not correct.') : null
      } else {
        asking.value = false
        pending = null
        p.reject(e)
      }
    } finally {
      password.value = ''
      busy.value = false
    }
  }

  function post<T>(url: string, body: Record<string, unknown> = {}): Promise<T> {
    return new Promise<T>((resolve, reject) => {
      pending = { url, body, resolve: resolve as (v: unknown) => void, reject }
      error.value = null
      void attempt()
    })
  }

  function submit() { if (pending && password.value) void attempt() }

  function cancel() {
    const p = pending
    pending = null
    asking.value = false
    p?.reject({ data: { detail: 'Not signed: the action was not carried out.' } })
  }

  return { asking, password, error, busy, post, submit, cancel }
}
