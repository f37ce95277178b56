import { h } from 'vue'

const GREEK = /([\u0370-\u03ff]+)/

/** A header whose Greek letters keep their case under the uppercase header style (σ must not become Σ). */
export function greekHeader(text: string) {
  return () => h('span', {}, text.split(GREEK).filter(Boolean).map((part) => (GREEK.test(part) ? h('span', { class: 'normal-case' }, part) : part)))
}

/** A header on two short lines (e.g. "σ" over "within"), so a narrow column of figures keeps a readable heading. */
export function stackedHeader(top: string, bottom: string) {
  const part = (t: string) => (GREEK.test(t) ? h('span', { class: 'normal-case' }, t) : t)
  return () => h('span', { class: 'inline-flex flex-col items-end leading-tight' }, [h('span', {}, [part(top)]), h('span', {}, [part(bottom)])])
}
