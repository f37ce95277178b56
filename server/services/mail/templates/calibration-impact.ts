import { htmlMail, siteUrl, type RenderedMail } from './layout'

export type CalibrationImpactUnit = { partNumber: string; serial: string; certificates: string[]; decision: 'no_impact' | 'retest' | 'recall'; reason: string | null }
export type CalibrationImpactInput = {
  makerName: string; customerName: string
  instrument: { kind: string; model: string }
  calibratedOn: string; windowFrom: string; windowTo: string
  units: CalibrationImpactUnit[]
}

/** What each decision means for the customer, in plain words. */
export const DECISION_WORDS: Record<CalibrationImpactUnit['decision'], string> = {
  no_impact: 'no effect on the certified results',
  retest: 'we will test this unit again',
  recall: 'we ask you to return this unit',
}

const day = (s: string) => s.slice(0, 10)

/**
 * Tells a customer's certificate contacts that an instrument used on their units was found out of tolerance, naming
 * each of their units with its certificates and what the maker decided for it.
 */
export function calibrationImpact(i: CalibrationImpactInput, env: NodeJS.ProcessEnv = process.env): RenderedMail {
  const n = i.units.length
  const units = `${n} ${n === 1 ? 'unit' : 'units'}`
  const subject = `Calibration finding on ${units} you hold — ${i.makerName}`
  const instrument = `${i.instrument.kind} (${i.instrument.model})`
  const intro = `a ${instrument} we used to test units was found out of tolerance when it was calibrated on ${day(i.calibratedOn)}. `
    + `It measured ${units} certified for ${i.customerName} between ${day(i.windowFrom)} and ${day(i.windowTo)}, after its previous calibration found it in tolerance. We reviewed each of them:`
  const line = (u: CalibrationImpactUnit) => `${u.partNumber} ${u.serial} — certificate ${u.certificates.join(', ')} — ${DECISION_WORDS[u.decision]}${u.reason ? ` (${u.reason})` : ''}`
  const caution = 'A recall does not withdraw a certificate by itself: the certificates named stay as issued until we tell you otherwise, '
    + 'and a certificate we withdraw shows as revoked when you check it. Your own acceptance rules decide what this finding means for units you have already accepted.'
  const link = `${siteUrl(env)}/portal`
  const text = [
    `Hello from ${i.makerName},`,
    '',
    intro,
    '',
    ...i.units.map((u) => `  ${line(u)}`),
    '',
    `Your units and certificates in the portal: ${link}`,
    '',
    caution,
    'You receive this because your contact entry is set to receive certificate notices.',
  ].join('\n')
  const html = htmlMail(`Calibration finding on ${units}`, [
    { kind: 'p', text: `Hello from ${i.makerName}: ${intro}` },
    { kind: 'facts', rows: i.units.map((u) => [`${u.partNumber} ${u.serial}`, `${u.certificates.join(', ')} — ${DECISION_WORDS[u.decision]}${u.reason ? ` (${u.reason})` : ''}`] as [string, string]) },
    { kind: 'button', label: 'Open the portal', href: link },
    { kind: 'note', text: `${caution} You receive this because your contact entry is set to receive certificate notices.` },
  ])
  return { subject, text, html }
}
