import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { AlternativeVerdict } from '../../../../shared/types/engine'
import type { LedgerView } from '../../../../shared/types/ledgerView'
import type { WeighingInfo } from '../../../../shared/types/realtime'
import {
  agreeingCount,
  agreementLine,
  beamOf,
  comparisonLine,
  dispersionWords,
  favouredByWords,
  favouredRows,
  favouriteWords,
  groupFor,
  latestRevealed,
  listedNames,
  narrowingOf,
  revealedBefore,
  timeLeft,
  weighedLine,
  weighedShare,
  wholePercentages,
  type WeighingResultsView,
} from '../../../../shared/utils/narrowing'

const verdict = (id: string, name: string, status: AlternativeVerdict['status'], supported: boolean | null = null): AlternativeVerdict => ({
  id, name, status, brokenLimits: [], dominatedBy: null, worseOn: [], tiesWith: [], supported, supportWeights: null,
})

/** The sea-front ledger of the end-to-end tests: one of each status. */
const view: LedgerView = {
  version: { number: 2, hash: 'h', shortHash: 'h', note: '', createdAt: '2026-01-01T00:00:00Z', attachmentId: null },
  criteria: [],
  alternatives: [
    { id: 'wall', name: 'North Wall', scores: {} },
    { id: 'dunes', name: 'Dune Nourishment', scores: {} },
    { id: 'barrier', name: 'Tidal Barrier', scores: {} },
    { id: 'reef', name: 'Offshore Reef', scores: {} },
    { id: 'groynes', name: 'Groyne Field', scores: {} },
    { id: 'retreat', name: 'Managed Retreat', scores: {} },
  ],
  analysis: {
    verdicts: [
      verdict('wall', 'North Wall', 'efficient', true),
      verdict('dunes', 'Dune Nourishment', 'efficient', false),
      verdict('barrier', 'Tidal Barrier', 'efficient', true),
      verdict('reef', 'Offshore Reef', 'infeasible'),
      verdict('groynes', 'Groyne Field', 'dominated'),
      verdict('retreat', 'Managed Retreat', 'weakly-efficient'),
    ],
    counts: { 'infeasible': 1, 'dominated': 1, 'weakly-efficient': 1, 'efficient': 3 },
    efficientIds: ['wall', 'dunes', 'barrier'],
    ideal: null,
    nadir: null,
  },
}

const weighing = (over: Partial<WeighingInfo> = {}): WeighingInfo => ({
  id: 'w1', number: 1, status: 'revealed', inputStyle: 'sliders', showNames: true, ledgerVersion: 2, ledgerHash: 'abc',
  openedAt: '2026-01-01T10:00:00Z', closesAt: null, closedAt: '2026-01-01T10:05:00Z', revealedAt: '2026-01-01T10:06:00Z', ...over,
})

const results = (over: Partial<WeighingResultsView> = {}): WeighingResultsView => ({
  weighing: weighing(),
  criteria: [{ id: 'cost', name: 'Capital cost', unit: '£m', direction: 'min' }, { id: 'homes', name: 'Homes protected', unit: 'homes', direction: 'max' }],
  alternatives: [
    { id: 'wall', name: 'North Wall', favouredBy: 2, supported: true },
    { id: 'dunes', name: 'Dune Nourishment', favouredBy: 0, supported: false },
    { id: 'barrier', name: 'Tidal Barrier', favouredBy: 1, supported: true },
  ],
  weightings: [
    { label: 'Ada', weights: [0.8, 0.2], favourites: ['wall'], runnersUp: ['dunes'] },
    { label: 'Ben', weights: [0.7, 0.3], favourites: ['wall'], runnersUp: ['dunes'] },
    { label: 'Cai', weights: [0.2, 0.8], favourites: ['barrier'], runnersUp: ['dunes'] },
  ],
  group: [
    { rule: 'mean', weights: [0.5667, 0.4333], dispersion: 0.2, agreement: 2 / 3, favourites: ['wall'], runnersUp: ['barrier'], note: null },
    { rule: 'median', weights: [0.7, 0.3], dispersion: 0.23, agreement: 2 / 3, favourites: ['wall'], runnersUp: ['dunes'], note: null },
  ],
  ...over,
})

describe('narrowingOf', () => {
  it('counts each stage with its names, most favoured first, and leaves out chosen until it exists', () => {
    const stages = narrowingOf(view, results())
    expect(stages.map(s => [s.key, s.count])).toEqual([['all', 6], ['within-limits', 5], ['efficient', 3], ['favoured', 2]])
    expect(stages[1]!.names).not.toContain('Offshore Reef')
    expect(stages[2]!.names).toEqual(['North Wall', 'Dune Nourishment', 'Tidal Barrier'])
    expect(stages[3]!.names).toEqual(['North Wall', 'Tidal Barrier'])
    expect(stages[3]!.note).toBe('Weighing 1')
  })

  it('says what each stage set aside', () => {
    expect(narrowingOf(view, results()).map(s => s.setAside)).toEqual(['', '1 outside limits', '2 dominated or only weakly efficient', '1 favoured by no weighting'])
    const onlyDominated = { ...view, analysis: { ...view.analysis!, counts: { 'infeasible': 0, 'dominated': 2, 'weakly-efficient': 0, 'efficient': 3 } } }
    expect(narrowingOf(onlyDominated, null).map(s => s.setAside)).toEqual(['', '', '2 dominated', ''])
    const onlyWeakly = { ...view, analysis: { ...view.analysis!, counts: { 'infeasible': 0, 'dominated': 0, 'weakly-efficient': 1, 'efficient': 3 } } }
    expect(narrowingOf(onlyWeakly, null)[2]!.setAside).toBe('1 only weakly efficient')
    const allFavoured = results({ alternatives: results().alternatives.map(a => ({ ...a, favouredBy: 1 })) })
    expect(narrowingOf(view, allFavoured)[3]!.setAside).toBe('')
  })

  it('adds the chosen stage only when an alternative is chosen', () => {
    const stages = narrowingOf(view, results(), { id: 'wall', name: 'North Wall' })
    expect(stages.at(-1)).toMatchObject({ key: 'chosen', count: 1, names: ['North Wall'] })
  })

  it('leaves the favoured count unknown before a reveal, and the later counts unknown without an analysis', () => {
    expect(narrowingOf(view, null)[3]).toMatchObject({ key: 'favoured', count: null, note: 'After the first weighing is revealed.' })
    const empty = narrowingOf({ version: null, alternatives: [], analysis: null }, null)
    expect(empty.map(s => s.count)).toEqual([0, null, null, null])
    expect(empty[1]!.note).toBe('The ledger has no alternatives yet.')
    expect(narrowingOf(null, null)[0]!.count).toBe(0)
  })

  it('orders favoured alternatives by share (ties sharing credit), result order among equals', () => {
    const tied = results({ alternatives: [
      { id: 'wall', name: 'North Wall', favouredBy: 0.5, supported: true },
      { id: 'barrier', name: 'Tidal Barrier', favouredBy: 1.5, supported: true },
      { id: 'dunes', name: 'Dune Nourishment', favouredBy: 0.5, supported: true },
    ] })
    expect(narrowingOf(view, tied)[3]!.names).toEqual(['Tidal Barrier', 'North Wall', 'Dune Nourishment'])
  })

  it('says when the revealed weighing was on an older ledger version', () => {
    const old = results({ weighing: weighing({ number: 3, ledgerVersion: 1 }) })
    expect(narrowingOf(view, old)[3]!.note).toBe('Weighing 3, on ledger version 1 (the ledger has changed since)')
  })

  it('never grows from one stage to the next (property)', () => {
    const statuses = ['infeasible', 'dominated', 'weakly-efficient', 'efficient'] as const
    fc.assert(fc.property(fc.array(fc.constantFrom(...statuses), { maxLength: 30 }), fc.array(fc.nat({ max: 3 }), { maxLength: 30 }), (list, favours) => {
      const alternatives = list.map((_, i) => ({ id: `a${i}`, name: `A${i}`, scores: {} }))
      const verdicts = list.map((status, i) => verdict(`a${i}`, `A${i}`, status, status === 'efficient' ? true : null))
      const efficientIds = verdicts.filter(v => v.status === 'efficient').map(v => v.id)
      const counts = { 'infeasible': 0, 'dominated': 0, 'weakly-efficient': 0, 'efficient': 0 }
      for (const s of list) counts[s] += 1
      const r = results({ alternatives: efficientIds.map((id, k) => ({ id, name: id, favouredBy: favours[k] ?? 0, supported: true })) })
      const stages = narrowingOf({ version: null, alternatives, analysis: { verdicts, counts, efficientIds, ideal: null, nadir: null } }, r)
      for (let k = 1; k < stages.length; k++) expect(stages[k]!.count!).toBeLessThanOrEqual(stages[k - 1]!.count!)
      for (let k = 1; k < stages.length; k++) for (const id of stages[k]!.ids) expect(stages[k - 1]!.ids).toContain(id)
    }))
  })
})

describe('listedNames', () => {
  it.each([
    [['A', 'B'], 3, { names: ['A', 'B'], hidden: 0 }],
    [['A', 'B', 'C'], 3, { names: ['A', 'B', 'C'], hidden: 0 }],
    [['A', 'B', 'C', 'D'], 3, { names: ['A', 'B'], hidden: 2 }],
    [['A', 'B', 'C', 'D', 'E', 'F', 'G'], 5, { names: ['A', 'B', 'C', 'D'], hidden: 3 }],
    [['A', 'B'], 1, { names: [], hidden: 2 }],
    [['A', 'B'], 0, { names: [], hidden: 2 }],
    [[], 3, { names: [], hidden: 0 }],
  ])('%j with at most %i', (names, max, expected) => {
    expect(listedNames({ names }, max)).toEqual(expected)
  })
})

describe('weighedLine and weighedShare', () => {
  it.each([
    [3, 5, false, '3 of 5 stakeholders have weighed'],
    [1, 5, false, '1 of 5 stakeholders has weighed'],
    [0, 1, false, '0 of 1 stakeholder has weighed'],
    [0, 1, true, '0 of 1 has weighed'],
    [2, 1, false, '2 of 1 stakeholder have weighed'], // someone removed after weighing
    [7, 9, true, '7 of 9 have weighed'],
    [0, 0, false, 'No stakeholder is in the room yet'],
    [1200, 1500, true, '1,200 of 1,500 have weighed'],
  ])('%i of %i (short %s)', (submitted, eligible, short, line) => {
    expect(weighedLine(submitted, eligible, { short })).toBe(line)
  })

  it.each([[3, 4, 0.75], [0, 0, 0], [5, 4, 1], [0, 4, 0]])('share of %i of %i is %d', (s, e, share) => {
    expect(weighedShare(s, e)).toBe(share)
  })
})

describe('wholePercentages', () => {
  it.each([
    [[1, 1, 1], [34, 33, 33]],
    [[0.5667, 0.4333], [57, 43]],
    [[0.25, 0.25, 0.5], [25, 25, 50]],
    [[0, 0], [0, 0]],
    [[], []],
    [[Number.NaN, 1], [0, 100]],
    [[-1, 3], [0, 100]],
  ])('%j → %j', (weights, expected) => {
    expect(wholePercentages(weights)).toEqual(expected)
  })

  it('always adds up to 100 and stays within one point of the exact share (property)', () => {
    fc.assert(fc.property(fc.array(fc.double({ min: 0, max: 1000, noNaN: true }), { minLength: 1, maxLength: 12 }).filter(w => w.reduce((a, b) => a + b, 0) > 1e-9), (weights) => {
      const total = weights.reduce((a, b) => a + b, 0)
      const points = wholePercentages(weights)
      expect(points.reduce((a, b) => a + b, 0)).toBe(100)
      points.forEach((p, i) => expect(Math.abs(p - (weights[i]! / total) * 100)).toBeLessThan(1 + 1e-9))
    }))
  })
})

describe('agreement, favourites and the beam', () => {
  it('counts weightings that share a winner with the group, ties included', () => {
    const r = results()
    expect(agreeingCount(r.weightings, ['wall'])).toBe(2)
    expect(agreeingCount([{ favourites: ['wall', 'barrier'] }, { favourites: ['dunes'] }], ['barrier'])).toBe(1)
    expect(agreeingCount([], ['wall'])).toBe(0)
  })

  it.each([
    [4, 5, '4 of 5 weightings favour the group\'s choice'],
    [1, 5, '1 of 5 weightings favours the group\'s choice'],
    [1, 1, '1 of 1 weighting favours the group\'s choice'],
    [0, 0, ''],
  ])('agreementLine(%i, %i)', (agreeing, total, line) => {
    expect(agreementLine(agreeing, total)).toBe(line)
  })

  it('names favourites, marking ties', () => {
    const alts = results().alternatives
    expect(favouriteWords(['wall'], alts)).toBe('North Wall')
    expect(favouriteWords(['wall', 'barrier'], alts)).toBe('North Wall and Tidal Barrier (tied)')
    expect(favouriteWords([], alts)).toBe('—')
    expect(favouriteWords(['gone'], alts)).toBe('gone')
  })

  it('tips the beam toward the group favourite, level when the lead is shared', () => {
    const alts = results().alternatives
    expect(beamOf(groupFor(results()), alts)).toEqual({ favourite: 'North Wall', runnerUp: 'Tidal Barrier', level: false })
    expect(beamOf({ favourites: ['wall', 'barrier'], runnersUp: ['dunes'] }, alts)).toEqual({ favourite: 'North Wall', runnerUp: 'Tidal Barrier', level: true })
    expect(beamOf({ favourites: [], runnersUp: [] }, alts)).toBeNull()
    expect(beamOf(null, alts)).toBeNull()
  })

  it('finds a group rule, the mean by default, and null when absent', () => {
    expect(groupFor(results())?.rule).toBe('mean')
    expect(groupFor(results(), 'median')?.weights).toEqual([0.7, 0.3])
    expect(groupFor(results(), 'geometric-mean')).toBeNull()
    expect(groupFor(null)).toBeNull()
  })
})

describe('dispersionWords', () => {
  it.each([
    [0.04, 'close', 4, 'The weightings are close together: on average 4% of a stakeholder\'s weight would have to move to match the group\'s.'],
    [0.1, 'some', 10, 'The weightings differ somewhat: on average 10% of a stakeholder\'s weight would have to move to match the group\'s.'],
    [0.4, 'wide', 40, 'The weightings are far apart: on average 40% of a stakeholder\'s weight would have to move to match the group\'s.'],
    [Number.NaN, 'close', 0, 'The weightings are close together: on average 0% of a stakeholder\'s weight would have to move to match the group\'s.'],
  ])('%d', (d, band, percent, sentence) => {
    expect(dispersionWords(d)).toEqual({ band, percent, sentence })
  })
})

describe('favouredRows', () => {
  it('sorts by share and flags never-favoured and unsupported alternatives apart', () => {
    const rows = favouredRows([
      { id: 'a', name: 'A', favouredBy: 0, supported: true },
      { id: 'b', name: 'B', favouredBy: 2, supported: true },
      { id: 'c', name: 'C', favouredBy: 0, supported: false },
      { id: 'd', name: 'D', favouredBy: 0, supported: null },
    ])
    expect(rows.map(r => [r.id, r.flag])).toEqual([['b', 'favoured'], ['a', 'never-favoured'], ['c', 'unsupported'], ['d', 'never-favoured']])
  })

  it.each([[2, '2 weightings'], [1, '1 weighting'], [1.5, '1.5 weightings'], [1 / 3, '0.33 weightings'], [0, '0 weightings']])('favouredByWords(%d)', (n, words) => {
    expect(favouredByWords(n)).toBe(words)
  })
})

describe('timeLeft', () => {
  const closes = '2026-01-01T10:10:00.000Z'
  const at = (iso: string) => Date.parse(iso)
  it.each([
    ['2026-01-01T10:05:55.000Z', 245, '4:05 left'],
    ['2026-01-01T10:09:59.500Z', 1, '0:01 left'],
    ['2026-01-01T10:10:00.000Z', 0, 'Time is up'],
    ['2026-01-01T10:20:00.000Z', 0, 'Time is up'],
    ['2026-01-01T08:07:57.000Z', 7323, '2:02:03 left'],
  ])('at %s', (now, seconds, text) => {
    expect(timeLeft(closes, at(now))).toEqual({ seconds, text })
  })
  it('is null without a limit or with an unreadable date', () => {
    expect(timeLeft(null, 0)).toBeNull()
    expect(timeLeft('not a date', 0)).toBeNull()
  })
})

describe('history helpers', () => {
  const list = [
    weighing({ id: 'w4', number: 4, status: 'open' }),
    weighing({ id: 'w3', number: 3, status: 'closed' }),
    weighing({ id: 'w2', number: 2, status: 'revealed' }),
    weighing({ id: 'w1', number: 1, status: 'revealed' }),
  ]
  it('finds the latest revealed weighing and the revealed one before another', () => {
    expect(latestRevealed(list)?.id).toBe('w2')
    expect(latestRevealed([])).toBeNull()
    expect(revealedBefore(list, 'w2')?.id).toBe('w1')
    expect(revealedBefore(list, 'w4')?.id).toBe('w2')
    expect(revealedBefore(list, 'w1')).toBeNull()
    expect(revealedBefore(list, 'unknown')).toBeNull()
  })

  it('compares the group standing of two rounds', () => {
    const first = results({ weighing: weighing({ number: 1 }) })
    const second = results({
      weighing: weighing({ id: 'w2', number: 2 }),
      weightings: [...results().weightings.map(w => ({ ...w, favourites: ['barrier'] })), { label: 'Dee', weights: [0.5, 0.5], favourites: ['wall'], runnersUp: [] }],
      group: [{ rule: 'mean', weights: [0.3, 0.7], dispersion: 0.1, agreement: 0.75, favourites: ['barrier'], runnersUp: ['wall'], note: null }],
    })
    expect(comparisonLine(first, second)).toBe('In weighing 1 the group favoured North Wall (2 of 3 agreeing); now Tidal Barrier (3 of 4).')
    expect(comparisonLine(first, first)).toBe('In weighing 1 the group favoured North Wall (2 of 3 agreeing); it still does (2 of 3).')
    expect(comparisonLine(first, results({ group: [] }))).toBe('')
  })
})
