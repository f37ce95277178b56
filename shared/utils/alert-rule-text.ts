// A rule in words: its kind's `reads` sentence with the rule's own figures in place of the braces.
import type { AlertRuleDto } from '../types/alert'
import { ALERT_KIND_INFO, type AlertKind } from './alert-kinds'
import { expectedUnit } from './measurement-names'
import { formatFigure, parameterLabel } from './value-format'


/** "1, 2 or 4" */
export function ruleNumbers(rules: readonly number[]): string {
  if (rules.length <= 1) return rules.join('')
  return `${rules.slice(0, -1).join(', ')} or ${rules[rules.length - 1]}`
}

const lowerFirst = (text: string) => text.charAt(0).toLowerCase() + text.slice(1)

type RuleFigures = Pick<AlertRuleDto, 'kind' | 'stationCode' | 'step' | 'parameter' | 'qualifier' | 'threshold' | 'windowUnits' | 'horizonUnits' | 'silentMinutes' | 'controlRules'>

export function ruleSentence(rule: RuleFigures): string {
  const info = ALERT_KIND_INFO[rule.kind as AlertKind]
  const v: Record<string, string> = {
    step: rule.step ?? '?',
    parameter: rule.parameter ? `${lowerFirst(parameterLabel(rule.parameter, rule.qualifier))} at ${rule.step ?? '?'}` : '?',
    // a bias threshold is in the parameter's unit and reads as its values do (jitter in fs)
    threshold: rule.threshold === null ? '?' : rule.kind === 'station_bias' ? formatFigure(rule.threshold, expectedUnit(rule.parameter ?? '')) : String(rule.threshold),
    windowUnits: rule.windowUnits === null ? '?' : String(rule.windowUnits),
    horizonUnits: rule.horizonUnits === null ? '?' : String(rule.horizonUnits),
    silentMinutes: rule.silentMinutes === null ? '?' : String(rule.silentMinutes),
    controlRules: rule.controlRules.length ? ruleNumbers(rule.controlRules) : '?',
    station: rule.stationCode ?? 'any station',
  }
  return info.reads.replace(/\{(\w+)\}/g, (_, k: string) => v[k] ?? `{${k}}`)
}

export const capitalised = (text: string) => text.charAt(0).toUpperCase() + text.slice(1)
