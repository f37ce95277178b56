import type { Ref } from 'vue'
import { useSignedPost } from '~/composables/signing/useSignedPost'
import { refusal } from '~/composables/specs/useDraftWorkflow'
import { usePlantTime } from '~/composables/settings/usePlantTime'
import { plantFieldToIso } from '~/utils/plant-time'

/** Approving a draft: signed (the password again unless the user signed in minutes ago), then `approved` is called. */
export function useRevisionApproval(id: Ref<number>, approved: () => Promise<unknown>) {
  const approval = reactive({ effectiveAt: '', note: '' })
  const message = ref<string | null>(null)
  const signer = useSignedPost()
  const { zone } = usePlantTime()
  async function approve() {
    message.value = null
    try {
      await signer.post(`/api/revisions/${id.value}/approve`, { ...(approval.effectiveAt ? { effectiveAt: plantFieldToIso(approval.effectiveAt, zone.value) } : {}), ...(approval.note ? { note: approval.note } : {}) })
      await approved()
    } catch (e) {
      message.value = refusal(e, 'Approval refused.')
    }
  }
  return { approval, message, signer, approve }
}
