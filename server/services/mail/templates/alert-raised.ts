import type { AlertFigure } from '../../../../shared/types/alert'
import { formatFigure } from '../../../../shared/utils/value-format'
import { htmlMail, siteUrl, type RenderedMail } from './layout'

export type AlertRaisedInput = {
  name: string; ruleName: string; kindLabel: string; subjectLabel: string; summary: string; figures: AlertFigure[]; link: string; raisedAt: Date
}

export const figureText = (f: AlertFigure) => formatFigure(f.value, f.unit)
/** A page of Tercet as an absolute address. */
export const absoluteLink = (path: string, env: NodeJS.ProcessEnv = process.env) => `${siteUrl(env)}${path.startsWith('/') ? path : `/${path}`}`

/** Tells a subscriber (or a station's owner) that an alert rule fired, with the figures behind it. */
export function alertRaised(i: AlertRaisedInput, env: NodeJS.ProcessEnv = process.env): RenderedMail {
  const link = absoluteLink(i.link, env)
  const subject = `Tercet alert: ${i.ruleName} — ${i.subjectLabel}`
  const when = i.raisedAt.toISOString().slice(0, 16).replace('T', ' ')
  const width = Math.max(...i.figures.map((f) => f.label.length), 8)
  const text = [
    `Hello ${i.name},`,
    '',
    `the rule "${i.ruleName}" (${i.kindLabel.toLowerCase()}) fired at ${when} UTC:`,
    '',
    `  ${i.summary}`,
    '',
    ...i.figures.map((f) => `  ${(f.label + ':').padEnd(width + 2)}${figureText(f)}`),
    '',
    `See it in Tercet: ${link}`,
    '',
    'The figures are computed from the results stored when the rule was evaluated; judge them against your own process knowledge before acting.',
    'You receive this because you follow this rule, its product or its station, or own the station.',
  ].join('\n')
  const html = htmlMail(`${i.ruleName}: ${i.subjectLabel}`, [
    { kind: 'p', text: `Hello ${i.name}, the rule "${i.ruleName}" (${i.kindLabel.toLowerCase()}) fired at ${when} UTC.` },
    { kind: 'p', text: i.summary },
    { kind: 'facts', rows: i.figures.map((f) => [f.label, figureText(f)] as [string, string]) },
    { kind: 'button', label: 'Open in Tercet', href: link },
    { kind: 'note', text: 'The figures are computed from the results stored when the rule was evaluated; judge them against your own process knowledge before acting. You receive this because you follow this rule, its product or its station, or own the station.' },
  ])
  return { subject, text, html }
}
