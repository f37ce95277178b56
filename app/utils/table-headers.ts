import { h } from 'vue'

const GREEK = /([\u0370-\u03ff]+)/

/** A header whose Greek letters keep their case under the uppercase header style (σ must not become Σ). */
export function greekHeader(text: string) {
  return () => h('span', {}, text.split(GREEK).filter(Boolean).map((part) => (GREEK.test(part) ? h('span', { class: 'normal-case' }, part) : part)))
}
