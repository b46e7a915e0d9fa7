import { describe, expect, it } from 'vitest'
import { palette } from '../../../tailwind.config'
import {
  countsLine,
  DISPLAY_STATUSES,
  displayStatusOf,
  formatNumber,
  formatScore,
  joinWords,
  STATUS_COLOURS,
  STATUS_VOCABULARY,
  statusReason,
  statusSentence,
} from '../../../shared/statusVocabulary'
import type { Criterion } from '../../../shared/types/decision'
import type { AlternativeVerdict } from '../../../shared/types/engine'

const criteria: Criterion[] = [
  { id: 'cost', name: 'Capital cost', unit: '£m', direction: 'min', highest: 30, precision: 1 },
  { id: 'homes', name: 'Homes protected', unit: 'homes', direction: 'max', lowest: 300, precision: 0 },
  { id: 'share', name: 'Local share', unit: '%', direction: 'max' },
]
const names: Record<string, string> = { wall: 'North Wall', dunes: 'Dune Nourishment', twin: 'South Wall' }
const nameOf = (id: string) => names[id] ?? id
const verdict = (over: Partial<AlternativeVerdict>): AlternativeVerdict => ({
  id: 'x', name: 'X', status: 'efficient', brokenLimits: [], dominatedBy: null, worseOn: [], tiesWith: [], supported: true, supportWeights: null, ...over,
})

describe('the status vocabulary', () => {
  it('has one entry per status, each with its own word, shape and symbol', () => {
    expect(Object.keys(STATUS_VOCABULARY).sort()).toEqual([...DISPLAY_STATUSES].sort())
    for (const key of ['word', 'shape', 'symbol'] as const) {
      expect(new Set(DISPLAY_STATUSES.map(s => STATUS_VOCABULARY[s][key])).size).toBe(DISPLAY_STATUSES.length)
    }
  })

  it('uses colours from the palette only', () => {
    const paletteHexes = new Set(Object.values(palette).flatMap(shades => Object.values(shades)))
    for (const hex of Object.values(STATUS_COLOURS)) expect(paletteHexes).toContain(hex)
    for (const entry of Object.values(STATUS_VOCABULARY)) {
      expect(paletteHexes).toContain(entry.stroke)
      if (entry.fill) expect(paletteHexes).toContain(entry.fill)
    }
  })

  it.each([
    ['efficient', true, 'efficient'],
    ['efficient', null, 'efficient'],
    ['efficient', false, 'unsupported'],
    ['dominated', null, 'dominated'],
    ['weakly-efficient', null, 'weakly-efficient'],
    ['infeasible', null, 'infeasible'],
  ] as const)('a %s verdict with supported = %s shows as %s', (status, supported, shown) => {
    expect(displayStatusOf({ status, supported })).toBe(shown)
  })
})

describe('numbers', () => {
  it.each([
    [31.5, 1, '31.5'],
    [30, 1, '30.0'],
    [12000, 0, '12,000'],
    [0.1 + 0.2, null, '0.3'],
    [-2.345, 2, '-2.35'],
    [Number.NaN, 2, '—'],
  ])('%s with precision %s reads %s', (value, precision, text) => {
    expect(formatNumber(value, precision)).toBe(text)
  })

  it('adds the unit, a space before words and none before %', () => {
    expect(formatScore(31.5, criteria[0]!)).toBe('31.5 £m')
    expect(formatScore(12000, criteria[1]!)).toBe('12,000 homes')
    expect(formatScore(40, criteria[2]!)).toBe('40%')
    expect(formatScore(4, { unit: '', precision: null })).toBe('4')
  })

  it('joins words as a sentence would', () => {
    expect(joinWords([])).toBe('')
    expect(joinWords(['A'])).toBe('A')
    expect(joinWords(['A', 'B'])).toBe('A and B')
    expect(joinWords(['A', 'B', 'C'])).toBe('A, B and C')
  })
})

describe('reasons', () => {
  it('names every broken limit with both numbers in the criterion unit', () => {
    const outside = verdict({
      status: 'infeasible',
      supported: null,
      brokenLimits: [
        { criterionId: 'cost', limit: 'highest', limitValue: 30, value: 31.5 },
        { criterionId: 'homes', limit: 'lowest', limitValue: 300, value: 250 },
      ],
    })
    expect(statusSentence(outside, criteria, nameOf)).toBe('Outside limits: Capital cost 31.5 £m > 30.0 £m; Homes protected 250 homes < 300 homes')
  })

  it('names the dominator and the criteria it is better on', () => {
    const dominated = verdict({ status: 'dominated', supported: null, dominatedBy: 'wall', worseOn: ['cost', 'homes'] })
    expect(statusReason(dominated, criteria, nameOf)).toBe('by North Wall — worse on Capital cost and Homes protected')
    expect(statusSentence(dominated, criteria, nameOf)).toBe('Dominated by North Wall — worse on Capital cost and Homes protected')
    const weakly = verdict({ status: 'weakly-efficient', supported: null, dominatedBy: 'dunes', worseOn: ['homes'] })
    expect(statusSentence(weakly, criteria, nameOf)).toBe('Weakly efficient only: dominated by Dune Nourishment — worse on Homes protected')
  })

  it('says no slider weighting picks an unsupported alternative, and names exact ties', () => {
    expect(statusSentence(verdict({ supported: false }), criteria, nameOf)).toBe('Efficient but unsupported: no slider weighting picks this')
    expect(statusSentence(verdict({}), criteria, nameOf)).toBe('Efficient')
    expect(statusSentence(verdict({ tiesWith: ['twin'] }), criteria, nameOf)).toBe('Efficient: same scores as South Wall')
  })
})

describe('countsLine', () => {
  it('reads like the design brief', () => {
    expect(countsLine({ 'infeasible': 3, 'dominated': 12, 'weakly-efficient': 0, 'efficient': 9 })).toBe('24 options · 3 outside limits · 12 dominated · 9 efficient')
  })

  it('adds weakly efficient only and unsupported when there are any, and groups thousands', () => {
    expect(countsLine({ 'infeasible': 1, 'dominated': 9_990, 'weakly-efficient': 2, 'efficient': 7 }, 2))
      .toBe('10,000 options · 1 outside limits · 9,990 dominated · 2 weakly efficient only · 7 efficient (2 unsupported)')
    expect(countsLine({ 'infeasible': 0, 'dominated': 0, 'weakly-efficient': 0, 'efficient': 1 })).toBe('1 option · 0 outside limits · 0 dominated · 1 efficient')
  })
})
