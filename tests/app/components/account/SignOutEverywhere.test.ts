// Signing out everywhere from /account: the password goes with the request, a refusal is shown in the server's
// words, and success forgets the session and leaves for the sign-in page.
import { describe, expect, it } from 'vitest'
import { mountSuspended, registerEndpoint } from '@nuxt/test-utils/runtime'
import { readBody, setResponseStatus } from 'h3'
import SignOutEverywhere from '~/components/account/SignOutEverywhere.vue'

describe('SignOutEverywhere', () => {
  it('shows the refusal of a wrong password, then signs out and goes to the sign-in page', async () => {
    const sent: unknown[] = []
    registerEndpoint('/api/me/sign-out-everywhere', {
      method: 'POST',
      handler: async (event) => {
        const body = await readBody(event)
        sent.push(body)
        if (body.password !== 'the right phrase') {
          setResponseStatus(event, 422)
          return { status: 422, detail: 'The current password is not correct.', errors: [{ pointer: '/password', message: 'not correct' }] }
        }
        setResponseStatus(event, 204)
        return null
      },
    })
    const w = await mountSuspended(SignOutEverywhere)
    const button = w.get('[data-test="sign-out-everywhere"] button')
    expect(button.attributes('disabled')).toBeDefined() // no password yet
    await w.get('[data-test="everywhere-password"]').setValue('a wrong phrase')
    await w.get('form').trigger('submit')
    await new Promise((r) => setTimeout(r, 50))
    expect(w.get('[role="alert"]').text()).toBe('The current password is not correct.')

    const { session } = useUserSession()
    session.value = { user: { id: 1, email: 'a@b.test', name: 'A', role: 'engineer', customerId: null } } as any
    await w.get('[data-test="everywhere-password"]').setValue('the right phrase')
    await w.get('form').trigger('submit')
    await new Promise((r) => setTimeout(r, 50))
    expect(sent).toEqual([{ password: 'a wrong phrase' }, { password: 'the right phrase' }])
    expect(session.value).toBeNull()
    expect(useRouter().currentRoute.value.path).toBe('/login')
  })
})
