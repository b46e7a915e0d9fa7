/**
 * The minutes PDF as a reader's tool sees it: Debian's `pdftotext` and `pdffonts` (poppler-utils)
 * read the file pdfkit wrote, so the checks do not trust our own code to read it back.
 */
import { spawnSync } from 'node:child_process'
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { inflateSync } from 'node:zlib'
import { afterAll, describe, expect, it } from 'vitest'
import { minutesFileName, renderMinutesPdf } from '../../../server/utils/minutesPdf'
import type { MinutesContent } from '../../../shared/types/minutes'

const work = mkdtempSync(join(tmpdir(), 'counterpoise-minutes-pdf-'))
afterAll(() => rmSync(work, { recursive: true, force: true }))

function poppler(command: string, pdf: Buffer, args: string[] = []): string {
  const file = join(work, `${command}-${Math.random().toString(36).slice(2)}.pdf`)
  writeFileSync(file, pdf)
  const run = spawnSync(command, [...args, file, ...(command === 'pdftotext' ? ['-'] : [])], { encoding: 'utf8' })
  if ((run.error as NodeJS.ErrnoException | undefined)?.code === 'ENOENT') throw new Error(`${command} is missing: apt-get install -y poppler-utils`)
  return run.stdout
}

const HASH = 'a3f1c2e4b5d6978812345678901234567890abcdefabcdefabcdefabcdef0123'
const SOURCE_HASH = '0f1e2d3c4b5a69788796a5b4c3d2e1f00f1e2d3c4b5a69788796a5b4c3d2e1f0'

export function sampleContent(overrides: Partial<MinutesContent> = {}): MinutesContent {
  return {
    room: { id: '00000000-0000-4000-8000-000000000001', title: 'Harbour <script>alert(1)</script> (wall) \\ options', question: 'Which sea wall should the town build?', status: 'live' },
    date: '2026-11-30T10:00:00.000Z',
    preparedAt: '2026-11-30T11:00:00.000Z',
    participants: [
      { name: 'Ada Facilitator', role: 'facilitator', roleLabel: 'Facilitator' },
      { name: null, role: 'stakeholder', roleLabel: 'Stakeholder' },
      { name: null, role: 'stakeholder', roleLabel: 'Stakeholder' },
      { name: 'Zoë Ångström', role: 'secretary', roleLabel: 'Secretary' },
    ],
    stakeholderNamesWithheld: true,
    anonymityNote: 'At least one weighing was anonymous.',
    ledger: { version: 3, hash: HASH, createdAt: '2026-11-29T09:00:00.000Z', note: 'Uploaded schemes.csv', source: { filename: 'schemes.csv', size: 14_700, sha256: SOURCE_HASH } },
    criteria: [
      { id: 'cost', name: 'Cost', unit: '£k', direction: 'min', directionLabel: 'lower is better', lowest: null, highest: 60, limitsText: 'at most 60 £k', precision: null },
      { id: 'homes', name: 'Homes protected', unit: 'homes', direction: 'max', directionLabel: 'higher is better', lowest: null, highest: null, limitsText: 'none', precision: null },
    ],
    alternatives: [
      { id: 'north', name: 'North wall', status: 'efficient', statusLabel: 'Efficient', scoresText: ['40 £k', '900 homes'], dominatedBy: null, worseOn: [], brokenLimits: [], explanation: '' },
      { id: 'south', name: 'South wall', status: 'dominated', statusLabel: 'Dominated', scoresText: ['50 £k', '800 homes'], dominatedBy: { id: 'north', name: 'North wall' }, worseOn: ['Cost', 'Homes protected'], brokenLimits: [], explanation: 'Dominated by North wall' },
      { id: 'tower', name: 'Tower Αθήνα', status: 'infeasible', statusLabel: 'Outside limits', scoresText: ['70 £k', '990 homes'], dominatedBy: null, worseOn: [], brokenLimits: ['Cost 70 £k is above the highest acceptable 60 £k'], explanation: '' },
    ],
    counts: { 'efficient': 1, 'weakly-efficient': 0, 'dominated': 1, 'infeasible': 1 },
    front: {
      x: { id: 'cost', name: 'Cost', unit: '£k', direction: 'min', highest: 60 },
      y: { id: 'homes', name: 'Homes protected', unit: 'homes', direction: 'max' },
      points: [
        { id: 'north', name: 'North wall', x: 40, y: 900, status: 'efficient', onFront: true },
        { id: 'south', name: 'South wall', x: 50, y: 800, status: 'dominated', onFront: false },
        { id: 'tower', name: 'Tower Αθήνα', x: 70, y: 990, status: 'infeasible', onFront: false },
      ],
      front: [{ x: 40, y: 900, ids: ['north'], names: ['North wall'] }],
      staircase: [[40, 900]],
    },
    rounds: [{
      number: 1, anonymous: true, inputStyle: 'sliders', ledgerVersion: 3, openedAt: '2026-11-30T09:00:00.000Z', closedAt: '2026-11-30T09:10:00.000Z', revealedAt: '2026-11-30T09:11:00.000Z',
      weightings: [{ label: 'Stakeholder 1', weightsPercent: [70, 30], favourites: ['North wall'] }, { label: 'Stakeholder 2', weightsPercent: [20, 80], favourites: ['North wall'] }],
      favouredBy: [{ name: 'North wall', count: 2 }],
      group: [{ rule: 'mean', ruleLabel: 'Mean', weightsPercent: [45, 55], dispersionPercent: 25, agreementPercent: 100, favourites: ['North wall'], note: null }],
      acceptability: { samples: 10_000, seed: 1_234_567_890 },
    }],
    vote: { ledgerVersion: 3, openedAt: '2026-11-30T09:20:00.000Z', closedAt: '2026-11-30T09:30:00.000Z', cast: 2, eligible: 2, tally: [{ name: 'North wall', counts: { approve: 2, object: 0, abstain: 0 } }] },
    resolution: {
      id: 'r1', alternativeName: 'North wall', engineStatus: 'efficient', engineStatusLabel: 'Efficient', statusStatement: null, justification: null,
      rationale: 'Cheapest wall that protects the most homes. ) Tj /Evil (', conditions: 'Funding confirmed.', dissent: '', recordedBy: 'Ada Facilitator', recordedAt: '2026-11-30T10:00:00.000Z', frozenAt: null,
    },
    amendments: [],
    audit: { total: 12, first: '2026-11-29T08:00:00.000Z', last: '2026-11-30T10:00:00.000Z', byAction: [{ action: 'ledger.version-created', count: 3 }] },
    caution: 'Counterpoise supports the deliberation; responsibility stays with the people.',
    ...overrides,
  }
}

describe('renderMinutesPdf', () => {
  it('writes the key content as text a PDF reader extracts, user text included verbatim', async () => {
    const pdf = await renderMinutesPdf(sampleContent(), { draft: false })
    expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-')
    const text = poppler('pdftotext', pdf, ['-layout'])
    expect(text).toContain('Harbour <script>alert(1)</script> (wall) \\ options')
    expect(text).toContain(HASH)
    expect(text).toContain('North wall')
    expect(text).toMatch(/Dominated by North wall; worse on Cost, Homes protected/)
    expect(text).toContain('Cheapest wall that protects the most homes. ) Tj /Evil (')
    expect(text).toContain('Zoë Ångström')
    expect(text).toContain('Tower Αθήνα')
    expect(text).toContain('40 £k')
    expect(text).toMatch(/2 stakeholders \(names withheld\)/)
    expect(text).not.toContain('DRAFT')
    expect(text).toContain('responsibility stays with the people')
    // Each revealed round names the draws behind its acceptability figures, so they can be drawn again.
    expect(text).toContain('Acceptability figures: 10,000 random weightings, seed 1234567890')
    // The uploaded file the option table was read from, cited by name, size and SHA-256.
    expect(text.replace(/\s+/g, ' ')).toContain(`Read from schemes.csv (14 kB), kept with the room; its SHA-256 ${SOURCE_HASH}`)
    const typed = poppler('pdftotext', await renderMinutesPdf(sampleContent({ ledger: { version: 3, hash: HASH, createdAt: '2026-11-29T09:00:00.000Z', note: '', source: null } }), { draft: false }))
    expect(typed).not.toContain('Read from')
  })

  it('embeds Nunito (subset) for Latin text, and marks a draft on its pages', async () => {
    const pdf = await renderMinutesPdf(sampleContent(), { draft: true })
    // To look at the file: MINUTES_PDF_PREVIEW=/tmp/minutes.pdf npx vitest run --project unit tests/unit/server/minutesPdf.test.ts
    if (process.env.MINUTES_PDF_PREVIEW) writeFileSync(process.env.MINUTES_PDF_PREVIEW, pdf)
    const fonts = poppler('pdffonts', pdf)
    expect(fonts).toMatch(/\+Nunito-Regular\s+CID TrueType\s+Identity-H\s+yes\s+yes\s+yes/)
    expect(fonts).toMatch(/Nunito-Bold/)
    expect(poppler('pdftotext', pdf)).toContain('DRAFT — not signed')
  })

  it('draws the favourites chart as vector rectangles in the page content', async () => {
    const withChart = await renderMinutesPdf(sampleContent(), { draft: false })
    const without = await renderMinutesPdf(sampleContent({ rounds: [], vote: null }), { draft: false })
    // pdftotext cannot see rectangles: count the rectangle operators (" re") in the inflated streams.
    const rectangles = (pdf: Buffer) => {
      let n = 0
      const s = pdf.toString('latin1')
      for (const m of s.matchAll(/stream\r?\n/g)) {
        const start = m.index + m[0].length
        const end = s.indexOf('endstream', start)
        try {
          n += (inflateSync(pdf.subarray(start, end)).toString('latin1').match(/ re\n/g) ?? []).length
        }
        catch { /* not a deflated stream */ }
      }
      return n
    }
    expect(rectangles(withChart)).toBeGreaterThanOrEqual(rectangles(without) + 3)
  })

  it('draws the front of the first two criteria, with named points and labelled axes', async () => {
    const pdf = await renderMinutesPdf(sampleContent(), { draft: false })
    const text = poppler('pdftotext', pdf)
    expect(text).toContain('Front of Cost and Homes protected')
    expect(text).toContain('Across: Cost (£k), lower is better. Up: Homes protected (homes), higher is better.')
    const without = poppler('pdftotext', await renderMinutesPdf(sampleContent({ front: null }), { draft: false }))
    expect(without).not.toContain('Front of')
    // The axis ticks come from niceAxis over the scores (40–70 £k, 800–990 homes).
    expect(text).toMatch(/\b1[,.]?000\b/)
  })

  it('names files from the title', () => {
    expect(minutesFileName('Harbour <wall> options!', new Date('2026-11-30T10:00:00Z'))).toBe('harbour-wall-options-minutes-2026-11-30.pdf')
  })
})
