import { htmlMail, type RenderedMail } from './layout'
import { absoluteLink } from './alert-raised'

export type CalibrationDueInput = { name: string; assetNumber: string; station: string; dueOn: string | null; daysLeft: number | null; link: string }

/** Tells a station's owner that an instrument the station holds is due for calibration (or past due). */
export function calibrationDue(i: CalibrationDueInput, env: NodeJS.ProcessEnv = process.env): RenderedMail {
  const link = absoluteLink(i.link, env)
  const state = i.dueOn === null ? 'has no calibration record in force'
    : i.daysLeft !== null && i.daysLeft >= 0 ? `is due for calibration on ${i.dueOn}, in ${i.daysLeft} ${i.daysLeft === 1 ? 'day' : 'days'}`
    : `was due for calibration on ${i.dueOn}`
  const subject = `Calibration: ${i.assetNumber} on ${i.station} ${i.dueOn === null ? 'has no record in force' : i.daysLeft !== null && i.daysLeft >= 0 ? `due ${i.dueOn}` : `past due since ${i.dueOn}`}`
  const text = [
    `Hello ${i.name},`,
    '',
    `${i.assetNumber}, held by ${i.station}, ${state}.`,
    'Runs the station takes with it from its due date on are flagged as taken out of calibration, and units tested so cannot be released without a deviation.',
    '',
    `  Instrument:  ${i.assetNumber}`,
    `  Station:     ${i.station}`,
    `  Due:         ${i.dueOn ?? 'no record in force'}`,
    '',
    `The station's instruments: ${link}`,
    '',
    'You receive this because you own the station. Your laboratory\'s and your quality system\'s rules decide the calibration interval.',
  ].join('\n')
  const html = htmlMail(`${i.assetNumber} ${i.dueOn === null ? 'has no calibration in force' : `due ${i.dueOn}`}`, [
    { kind: 'p', text: `Hello ${i.name}, ${i.assetNumber}, held by ${i.station}, ${state}.` },
    { kind: 'p', text: 'Runs the station takes with it from its due date on are flagged as taken out of calibration, and units tested so cannot be released without a deviation.' },
    { kind: 'facts', rows: [['Instrument', i.assetNumber], ['Station', i.station], ['Due', i.dueOn ?? 'no record in force']] },
    { kind: 'button', label: "Open the station's instruments", href: link },
    { kind: 'note', text: "You receive this because you own the station. Your laboratory's and your quality system's rules decide the calibration interval." },
  ])
  return { subject, text, html }
}
