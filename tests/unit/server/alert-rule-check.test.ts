// The field checks of an alert rule and the rule in words, without a database.
import { describe, expect, it } from 'vitest'
import { checkRuleFields, clearUnused } from '../../../server/services/alerts/rule-check'
import { ruleNumbers, ruleSentence } from '../../../shared/utils/alert-rule-text'
import { ALERT_KINDS, ALERT_KIND_INFO } from '../../../shared/utils/alert-kinds'

const pointers = (errors: { pointer: string }[]) => errors.map((e) => e.pointer).sort()

describe('checkRuleFields', () => {
  it('asks for every required field of every kind, at the body key that carries it', () => {
    const KEY: Record<string, string> = { product: '/partNumber', station: '/stationId', step: '/step', parameter: '/parameter', threshold: '/threshold', windowUnits: '/windowUnits', horizonUnits: '/horizonUnits', silentMinutes: '/silentMinutes', controlRules: '/controlRules' }
    for (const kind of ALERT_KINDS) {
      expect(pointers(checkRuleFields({ name: 'r', kind })), kind).toEqual(ALERT_KIND_INFO[kind].required.map((f) => KEY[f]).sort())
    }
  })

  it('refuses values for fields the kind does not read, the qualifier going with the parameter', () => {
    expect(pointers(checkRuleFields({ name: 'r', kind: 'calibration_due', qualifier: 1000, silentMinutes: 5 }))).toEqual(['/qualifier', '/silentMinutes'])
    expect(checkRuleFields({ name: 'r', kind: 'calibration_due', qualifier: null, silentMinutes: null, stationId: 3 })).toEqual([])
  })

  it('holds the window to 2–10 000 units and a yield threshold to (0, 100] %', () => {
    const y = (windowUnits: number, threshold: number) => pointers(checkRuleFields({ name: 'r', kind: 'yield_low', partNumber: 'P', step: 's', windowUnits, threshold }))
    expect(y(2, 100)).toEqual([])
    expect(y(10_000, 0.1)).toEqual([])
    expect(y(1, 50)).toEqual(['/windowUnits'])
    expect(y(10_001, 50)).toEqual(['/windowUnits'])
    expect(y(20, 0)).toEqual(['/threshold'])
    expect(y(20, 100.01)).toEqual(['/threshold'])
  })

  it('clears what a new kind does not use and keeps what it does', () => {
    const out = clearUnused({ name: 'r', kind: 'yield_low', partNumber: 'P', step: 's', parameter: 'output_power', qualifier: 0, threshold: 90, windowUnits: 30, controlRules: [1] })
    expect(out).toMatchObject({ partNumber: 'P', step: 's', parameter: null, qualifier: null, threshold: 90, windowUnits: 30, controlRules: null })
  })
})

describe('ruleSentence', () => {
  it('fills the kind\'s sentence with the rule\'s figures', () => {
    const base = { stationCode: null, step: 'final', parameter: 'phase_noise', qualifier: 10_000, threshold: null, windowUnits: 50, horizonUnits: null, silentMinutes: null, controlRules: [1, 2, 4] }
    expect(ruleSentence({ ...base, kind: 'control_rule' })).toBe('a point of phase noise @ 10 kHz at final breaks Western Electric rule 1, 2 or 4 among the last 50 units')
    expect(ruleSentence({ ...base, kind: 'station_silent', parameter: null, silentMinutes: 45, controlRules: [] })).toBe('any station has posted nothing for 45 minutes while a lot it tested in the last 24 hours is open')
    expect(ruleNumbers([3])).toBe('3')
  })
  it('states a bias threshold in the unit the values are shown in: jitter in fs (1 fs = 1e-15 s)', () => {
    const bias = { kind: 'station_bias' as const, stationCode: null, step: 'final', parameter: 'integrated_jitter', qualifier: null, threshold: 4e-15, windowUnits: 50, horizonUnits: null, silentMinutes: null, controlRules: [] }
    expect(ruleSentence(bias)).toBe("a station's mean of integrated jitter at final differs from the other stations' by more than 4.0\u00a0fs over the last 50 units")
  })
})
