// The portal's guide shows until the reader dismisses it; the choice is kept in this browser only.
const KEY = 'tercet.portal.guide.dismissed'

export function useFirstVisitGuide() {
  // hidden until mounted: the server cannot know what this browser chose
  const open = ref(false)
  onMounted(() => {
    try { open.value = localStorage.getItem(KEY) !== '1' } catch { open.value = true }
  })
  function dismiss() {
    open.value = false
    try { localStorage.setItem(KEY, '1') } catch { /* storage refused: hidden for this visit only */ }
  }
  function reopen() {
    open.value = true
    try { localStorage.removeItem(KEY) } catch { /* nothing kept */ }
  }
  return { open, dismiss, reopen }
}
