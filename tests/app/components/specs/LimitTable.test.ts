// The limit table of a draft revision: what the author types is checked at once, the messages are listed under the
// table and marked at the cell, Save stays off while a row is wrong, and the server's refusal is shown when it answers.
import { describe, expect, it } from 'vitest'
import { defineComponent, h, ref } from 'vue'
import { mountSuspended, registerEndpoint } from '@nuxt/test-utils/runtime'
import { readBody, setResponseStatus } from 'h3'
import LimitTable from '~/components/specs/LimitTable.vue'
import { useLimitEditor } from '~/composables/specs/useLimitEditor'
import type { SpecLimitRow } from '#shared/utils/spec-limits'

const STEPS = ['tune', 'final']
const POWER: SpecLimitRow = {
  step: 'final', name: 'output_power', qualifier: 0, lsl: 12, usl: 15, target: null, unit: 'dBm', required: true, rule: 'simple', defaultUncertainty: null, key: false,
}

// the revision page hands the table an editor made over its saved limits; this host does the same
function host(revisionId: number) {
  return defineComponent({
    setup() {
      const saved = ref<SpecLimitRow[]>([POWER])
      const editor = useLimitEditor(ref(revisionId), saved, ref(STEPS), async () => {})
      return () => h(LimitTable, { revisionId, limits: saved.value, steps: STEPS, editable: true, fixed: false, editor })
    },
  })
}

const saveButton = (w: Awaited<ReturnType<typeof mountSuspended>>) => w.get('[data-test="save-limits"]')

describe('LimitTable (draft)', () => {
  it('lists an LSL above the USL under the table, marks the USL cell and keeps Save off', async () => {
    const w = await mountSuspended(host(901))
    expect(w.find('[data-test="limit-errors"]').exists()).toBe(false)
    expect(saveButton(w).attributes('disabled')).toBeDefined() // nothing changed yet
    await w.get('input[aria-label="LSL of row 1"]').setValue('18')
    const list = w.get('[data-test="limit-errors"]')
    expect(list.text()).toContain('Row 1 · USL: must be above the LSL (18)')
    const usl = w.get('input[aria-label="USL of row 1"]')
    expect(usl.attributes('title')).toBe('must be above the LSL (18)')
    expect(usl.classes()).toContain('border-verdict-fail')
    expect(w.get('input[aria-label="LSL of row 1"]').classes()).not.toContain('border-verdict-fail')
    expect(saveButton(w).attributes('disabled')).toBeDefined()
  })

  it('refuses text in a number cell and lets the row through once it is a number', async () => {
    const w = await mountSuspended(host(902))
    await w.get('input[aria-label="Target of row 1"]').setValue('thirteen')
    expect(w.get('[data-test="limit-errors"]').text()).toContain('Row 1 · Target: must be a number')
    expect(saveButton(w).attributes('disabled')).toBeDefined()
    await w.get('input[aria-label="Target of row 1"]').setValue('13.5')
    expect(w.find('[data-test="limit-errors"]').exists()).toBe(false)
    expect(w.text()).toContain('Unsaved changes; every row is valid.')
    expect(saveButton(w).attributes('disabled')).toBeUndefined()
  })

  it('asks for the name, unit and a limit of an added row', async () => {
    const w = await mountSuspended(host(903))
    const add = w.findAll('button').find((b) => b.text() === 'Add limit')!
    await add.trigger('click')
    const text = w.get('[data-test="limit-errors"]').text()
    expect(text).toContain('Row 2 · Name: is required')
    expect(text).toContain('Row 2 · Unit: is required')
    expect(text).toContain('Row 2 · USL: set an LSL, a USL or both')
    expect(text).not.toContain('Row 1')
    expect(saveButton(w).attributes('disabled')).toBeDefined()
  })

  it('sends the parsed limits and shows the server’s refusal', async () => {
    let sent: unknown = null
    registerEndpoint('/api/revisions/904/limits', {
      method: 'PUT',
      handler: async (event) => {
        sent = await readBody(event)
        setResponseStatus(event, 422)
        return { title: 'Unprocessable', status: 422, detail: 'The revision is no longer a draft.', errors: [{ pointer: '/limits/0/usl', message: 'cannot change after approval' }] }
      },
    })
    const w = await mountSuspended(host(904))
    await w.get('input[aria-label="USL of row 1"]').setValue('15.5')
    await saveButton(w).trigger('click')
    await new Promise((r) => setTimeout(r, 50))
    await w.vm.$nextTick()
    expect(sent).toEqual({ limits: [{ ...POWER, usl: 15.5 }] })
    expect(w.text()).toContain('The revision is no longer a draft.')
  })
})
