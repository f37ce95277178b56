// The shared frame of Tercet's e-mail: plain text and HTML parts; the HTML uses inline styles only (mail clients drop
// style sheets), in the palette of tailwind.config.ts.

export type RenderedMail = { subject: string; text: string; html: string }

export const PALETTE = {
  paper: '#f7f3ea', paperEdge: '#e2d9c4', ink: '#1d2b45', inkSoft: '#3d4b66', inkFaint: '#6b7690', copper: '#b8662a', copperDark: '#8c4a1a',
} as const

/** Escapes text for HTML element content and double-quoted attribute values. */
export function escapeHtml(s: unknown): string {
  return String(s).replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;')
}

/** Only http(s) links go into an href; anything else becomes an inert "#". */
export function safeHref(url: string): string {
  return /^https?:\/\//i.test(url) ? escapeHtml(url) : '#'
}

export function siteUrl(env: NodeJS.ProcessEnv = process.env): string {
  return (env.NUXT_PUBLIC_SITE_URL || 'http://localhost:3000').replace(/\/+$/, '')
}

export type HtmlBlock = { kind: 'p'; text: string } | { kind: 'facts'; rows: [string, string][] } | { kind: 'button'; label: string; href: string } | { kind: 'note'; text: string }

/** Builds the HTML part from blocks whose text is escaped here; no caller passes markup. */
export function htmlMail(title: string, blocks: HtmlBlock[]): string {
  const body = blocks.map((b) => {
    if (b.kind === 'p') return `<p style="margin:0 0 14px;font-size:15px;line-height:1.5;color:${PALETTE.ink}">${escapeHtml(b.text)}</p>`
    if (b.kind === 'note') return `<p style="margin:14px 0 0;font-size:13px;line-height:1.5;color:${PALETTE.inkFaint}">${escapeHtml(b.text)}</p>`
    if (b.kind === 'button') return `<p style="margin:18px 0"><a href="${safeHref(b.href)}" style="display:inline-block;padding:10px 18px;background:${PALETTE.copper};color:#ffffff;text-decoration:none;border-radius:4px;font-weight:600">${escapeHtml(b.label)}</a></p><p style="margin:0 0 14px;font-size:12px;color:${PALETTE.inkFaint};word-break:break-all">${escapeHtml(b.href)}</p>`
    return `<table role="presentation" style="border-collapse:collapse;margin:0 0 14px">${b.rows.map(([k, v]) => `<tr><td style="padding:3px 16px 3px 0;font-size:13px;color:${PALETTE.inkSoft}">${escapeHtml(k)}</td><td style="padding:3px 0;font-size:14px;color:${PALETTE.ink};font-family:'Roboto Mono',ui-monospace,monospace">${escapeHtml(v)}</td></tr>`).join('')}</table>`
  }).join('\n')
  return `<!doctype html><html><body style="margin:0;padding:24px;background:${PALETTE.paper};font-family:Inter,system-ui,sans-serif">`
    + `<div style="max-width:560px;margin:0 auto;background:#ffffff;border:1px solid ${PALETTE.paperEdge};border-top:4px solid ${PALETTE.copper};padding:24px">`
    + `<p style="margin:0 0 4px;font-size:12px;letter-spacing:0.08em;text-transform:uppercase;color:${PALETTE.copperDark}">Tercet</p>`
    + `<h1 style="margin:0 0 18px;font-size:19px;color:${PALETTE.ink}">${escapeHtml(title)}</h1>\n${body}</div></body></html>`
}
