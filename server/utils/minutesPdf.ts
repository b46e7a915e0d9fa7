/**
 * Minutes as PDF (pdfkit): the same content as the preview page, in reading order, with vector
 * charts (favourites per alternative for each round, and the vote tally) drawn into the page.
 *
 * Fonts: Nunito from @fontsource/nunito (its WOFF files, which pdfkit embeds as subsets with a
 * ToUnicode map, so the text can be searched and copied). Fontsource splits Nunito by script, and
 * pdfkit draws a run in one font, so each run of text uses Nunito when the Latin file holds every
 * character of it, else DejaVu Sans (Debian's fonts-dejavu) when installed, else Helvetica. The two
 * Nunito files ship inside the server build as Nitro server assets (nuxt.config.ts), so a deployed
 * .output needs no node_modules; outside Nitro (unit tests) they are read from the package.
 *
 * Everything people typed is passed to pdfkit as text to draw, never as PDF syntax.
 */
import { existsSync } from 'node:fs'
import { createRequire } from 'node:module'
import { join } from 'node:path'
import PDFDocument from 'pdfkit'
import { STATUS_VOCABULARY, formatNumber } from '../../shared/statusVocabulary'
import type { MinutesContent } from '../../shared/types/minutes'
import { niceAxis, type PairFront } from '../../shared/utils/chartData'
import { fileSize } from '../../shared/utils/fileSize'
import { acceptabilityDrawsLine } from '../../shared/utils/weightSpace'

const INK = '#12393a'
const MUTED = '#454e57'
const RULE = '#c9d3d3'
const BAR = '#bf8520'
const CHOICE_COLOURS = { approve: '#2f6f4f', object: '#9c3f25', abstain: '#9aa3ab' } as const

const MARGIN = 56
const A4 = { width: 595.28, height: 841.89 }

type Weight = 'regular' | 'bold'

interface FontFiles { regular: string | Buffer, bold: string | Buffer }

/** Where a package's file is, from the project (cwd) or from this module; null when not found. */
function resolvePackageFile(specifier: string): string | null {
  for (const base of [join(process.cwd(), 'package.json'), import.meta.url]) {
    try {
      const path = createRequire(base).resolve(specifier)
      if (existsSync(path)) return path
    }
    catch { /* try the next base */ }
  }
  return null
}

const NUNITO = { regular: 'nunito-latin-400-normal.woff', bold: 'nunito-latin-700-normal.woff' } as const

/** Where the server build keeps the two files (set by server/plugins/minutesFonts.ts); null outside Nitro. */
let assetLoader: ((name: string) => Promise<Uint8Array | null>) | null = null
export function setNunitoAssetLoader(loader: (name: string) => Promise<Uint8Array | null>) {
  assetLoader = loader
  nunitoFiles = undefined
}

async function nunitoFromAssets(): Promise<FontFiles | null> {
  if (!assetLoader) return null
  try {
    const [regular, bold] = await Promise.all([assetLoader(NUNITO.regular), assetLoader(NUNITO.bold)])
    return regular && bold ? { regular: Buffer.from(regular), bold: Buffer.from(bold) } : null
  }
  catch {
    return null
  }
}

let nunitoFiles: Promise<FontFiles | null> | undefined
function nunito(): Promise<FontFiles | null> {
  nunitoFiles ??= (async () => {
    const fromAssets = await nunitoFromAssets()
    if (fromAssets) return fromAssets
    const regular = resolvePackageFile(`@fontsource/nunito/files/${NUNITO.regular}`)
    const bold = resolvePackageFile(`@fontsource/nunito/files/${NUNITO.bold}`)
    if (regular && bold) return { regular, bold }
    console.warn('[minutes] Nunito (@fontsource/nunito) not found: the minutes use Helvetica.')
    return null
  })()
  return nunitoFiles
}

const DEJAVU: FontFiles = { regular: '/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf', bold: '/usr/share/fonts/truetype/dejavu/DejaVuSans-Bold.ttf' }

type Doc = InstanceType<typeof PDFDocument>

/** Picks, per run of text, a registered font that can draw every character of it. */
class FontPicker {
  private readonly chain: Record<Weight, string[]> = { regular: [], bold: [] }
  private readonly coverage = new Map<string, { hasGlyphForCodePoint?: (cp: number) => boolean } | null>()

  constructor(private readonly doc: Doc, n: FontFiles | null) {
    const sets: [string, FontFiles][] = []
    if (n) sets.push(['nunito', n])
    if (existsSync(DEJAVU.regular) && existsSync(DEJAVU.bold)) sets.push(['dejavu', DEJAVU])
    for (const [name, files] of sets) {
      for (const weight of ['regular', 'bold'] as const) {
        doc.registerFont(`${name}-${weight}`, files[weight])
        this.chain[weight].push(`${name}-${weight}`)
      }
    }
    this.chain.regular.push('Helvetica')
    this.chain.bold.push('Helvetica-Bold')
  }

  private covers(font: string, text: string): boolean {
    if (font.startsWith('Helvetica')) return true
    if (!this.coverage.has(font)) {
      this.doc.font(font)
      this.coverage.set(font, (this.doc as unknown as { _font?: { font?: { hasGlyphForCodePoint?: (cp: number) => boolean } } })._font?.font ?? null)
    }
    const face = this.coverage.get(font)
    if (!face?.hasGlyphForCodePoint) return true
    for (const ch of text) {
      const cp = ch.codePointAt(0)!
      if (cp <= 0x20 || cp === 0xA0) continue
      if (!face.hasGlyphForCodePoint(cp)) return false
    }
    return true
  }

  use(text: string, weight: Weight = 'regular', size = 10) {
    const font = this.chain[weight].find(f => this.covers(f, text)) ?? this.chain[weight].at(-1)!
    this.doc.font(font).fontSize(size)
  }
}

/** Control characters other than line breaks and tabs are dropped: they have no glyphs. */
const clean = (text: string) => [...text].filter((ch) => {
  const cp = ch.codePointAt(0)!
  return cp === 0x0A || cp === 0x09 || (cp >= 0x20 && cp !== 0x7F && (cp < 0x80 || cp > 0x9F))
}).join('')

const dateTime = (iso: string | null) => iso
  ? `${new Intl.DateTimeFormat('en-GB', { dateStyle: 'long', timeStyle: 'short', timeZone: 'UTC' }).format(new Date(iso))} UTC`
  : '—'
const dateOnly = (iso: string) => new Intl.DateTimeFormat('en-GB', { dateStyle: 'long', timeZone: 'UTC' }).format(new Date(iso))

export interface MinutesPdfOptions {
  /** Print "Draft — not signed" on every page. */
  draft: boolean
}

/** The minutes as an unsigned PDF. */
export async function renderMinutesPdf(content: MinutesContent, options: MinutesPdfOptions): Promise<Buffer> {
  const nunitoFonts = await nunito()
  const doc = new PDFDocument({
    size: 'A4',
    margins: { top: MARGIN, bottom: MARGIN, left: MARGIN, right: MARGIN },
    bufferPages: true,
    // No default font: Helvetica is loaded only if a run of text needs it.
    font: null as unknown as string,
    info: {
      Title: `Minutes — ${content.room.title}`,
      Subject: content.room.question,
      Creator: 'Counterpoise',
      Producer: 'Counterpoise (pdfkit)',
      CreationDate: new Date(content.preparedAt),
    },
    lang: 'en-GB',
    displayTitle: true,
  })
  const chunks: Buffer[] = []
  doc.on('data', (chunk: Buffer) => chunks.push(chunk))
  const finished = new Promise<Buffer>((resolve, reject) => {
    doc.on('end', () => resolve(Buffer.concat(chunks)))
    doc.on('error', reject)
  })

  const fonts = new FontPicker(doc, nunitoFonts)
  const width = A4.width - 2 * MARGIN
  const bottom = A4.height - MARGIN

  const ensure = (height: number) => {
    if (doc.y + height > bottom) doc.addPage()
  }
  const text = (value: string, { size = 10, weight = 'regular' as Weight, color = INK, gap = 2, indent = 0 } = {}) => {
    const t = clean(value)
    fonts.use(t, weight, size)
    ensure(doc.heightOfString(t, { width: width - indent }))
    doc.fillColor(color).text(t, MARGIN + indent, doc.y, { width: width - indent })
    doc.y += gap
  }
  const heading = (value: string) => {
    // Keep a heading with at least a few lines of what follows it.
    ensure(110)
    doc.y += 8
    text(value, { size: 14, weight: 'bold', gap: 1 })
    doc.moveTo(MARGIN, doc.y).lineTo(MARGIN + width, doc.y).lineWidth(0.6).strokeColor(RULE).stroke()
    doc.y += 6
  }
  const labelled = (label: string, value: string, indent = 0) => {
    const l = clean(label)
    const v = clean(value)
    fonts.use(l, 'bold', 10)
    const labelWidth = Math.min(150, doc.widthOfString(l) + 6)
    fonts.use(v, 'regular', 10)
    const height = doc.heightOfString(v, { width: width - indent - labelWidth })
    ensure(height)
    const y = doc.y
    fonts.use(l, 'bold', 10)
    doc.fillColor(MUTED).text(l, MARGIN + indent, y, { width: labelWidth })
    fonts.use(v, 'regular', 10)
    doc.fillColor(INK).text(v, MARGIN + indent + labelWidth, y, { width: width - indent - labelWidth })
    doc.y = Math.max(doc.y, y + height) + 2
  }

  /** Horizontal bars: one row per item, its value written after the bar (with its unit). */
  const barChart = (title: string, rows: { label: string, value: number }[], unit: (v: number) => string) => {
    if (rows.length === 0) return
    const rowHeight = 16
    const labelWidth = 160
    const top = 18
    ensure(top + rows.length * rowHeight + 10)
    text(title, { size: 10, weight: 'bold', gap: 4 })
    const maxValue = Math.max(1, ...rows.map(r => r.value))
    const barArea = width - labelWidth - 70
    const y0 = doc.y
    rows.forEach((row, i) => {
      const y = y0 + i * rowHeight
      const label = clean(row.label)
      fonts.use(label, 'regular', 9)
      doc.fillColor(INK).text(label, MARGIN, y + 2, { width: labelWidth - 8, height: rowHeight, ellipsis: true, lineBreak: false })
      const barWidth = (row.value / maxValue) * barArea
      doc.rect(MARGIN + labelWidth, y + 2, barArea, rowHeight - 5).fillColor('#f3efe4').fill()
      if (barWidth > 0) doc.rect(MARGIN + labelWidth, y + 2, barWidth, rowHeight - 5).fillColor(BAR).fill()
      const value = unit(row.value)
      fonts.use(value, 'regular', 9)
      doc.fillColor(INK).text(value, MARGIN + labelWidth + barArea + 6, y + 2, { width: 64, lineBreak: false })
    })
    doc.moveTo(MARGIN + labelWidth, y0).lineTo(MARGIN + labelWidth, y0 + rows.length * rowHeight).lineWidth(0.8).strokeColor(MUTED).stroke()
    doc.x = MARGIN
    doc.y = y0 + rows.length * rowHeight + 8
  }

  /** Stacked horizontal bars of approve / object / abstain, with a legend. */
  const tallyChart = (rows: NonNullable<MinutesContent['vote']>['tally'], eligible: number) => {
    const rowHeight = 16
    const labelWidth = 160
    ensure(36 + rows.length * rowHeight)
    const legendY = doc.y
    let x = MARGIN + labelWidth
    for (const choice of ['approve', 'object', 'abstain'] as const) {
      doc.rect(x, legendY + 2, 9, 9).fillColor(CHOICE_COLOURS[choice]).fill()
      fonts.use(choice, 'regular', 9)
      doc.fillColor(INK).text(choice, x + 13, legendY + 1, { lineBreak: false })
      x += 70
    }
    const y0 = legendY + 18
    const total = Math.max(1, eligible, ...rows.map(r => r.counts.approve + r.counts.object + r.counts.abstain))
    const barArea = width - labelWidth - 90
    rows.forEach((row, i) => {
      const y = y0 + i * rowHeight
      const label = clean(row.name)
      fonts.use(label, 'regular', 9)
      doc.fillColor(INK).text(label, MARGIN, y + 2, { width: labelWidth - 8, height: rowHeight, ellipsis: true, lineBreak: false })
      let bx = MARGIN + labelWidth
      for (const choice of ['approve', 'object', 'abstain'] as const) {
        const w = (row.counts[choice] / total) * barArea
        if (w > 0) doc.rect(bx, y + 2, w, rowHeight - 5).fillColor(CHOICE_COLOURS[choice]).fill()
        bx += w
      }
      const summary = `${row.counts.approve} / ${row.counts.object} / ${row.counts.abstain}`
      fonts.use(summary, 'regular', 9)
      doc.fillColor(INK).text(summary, MARGIN + labelWidth + barArea + 6, y + 2, { width: 84, lineBreak: false })
    })
    doc.x = MARGIN
    doc.y = y0 + rows.length * rowHeight + 8
  }

  /**
   * The scatter of two criteria: efficient alternatives as dark dots (named when there are few),
   * weakly efficient ones in brass, dominated ones as rings, those outside limits as crosses, and
   * the front of the pair as a staircase line. Axes carry the criteria's names, units and directions.
   */
  const frontChart = (front: PairFront) => {
    if (front.points.length === 0) return
    const plotHeight = 190
    const left = MARGIN + 46
    const plotWidth = width - 46 - 8
    ensure(plotHeight + 90)
    text(`Front of ${front.x.name} and ${front.y.name}`, { size: 10, weight: 'bold', gap: 1 })
    text('The first two criteria only: an alternative can also be efficient through the others.', { size: 8, color: MUTED, gap: 6 })
    const xs = front.points.map(p => p.x)
    const ys = front.points.map(p => p.y)
    const ax = niceAxis(Math.min(...xs), Math.max(...xs))
    const ay = niceAxis(Math.min(...ys), Math.max(...ys))
    const top = doc.y
    const px = (x: number) => left + ((x - ax.min) / (ax.max - ax.min)) * plotWidth
    const py = (y: number) => top + plotHeight - ((y - ay.min) / (ay.max - ay.min)) * plotHeight
    doc.rect(left, top, plotWidth, plotHeight).lineWidth(0.6).strokeColor(RULE).stroke()
    for (let i = 0; i <= ax.ticks; i++) {
      const v = ax.min + i * ax.step
      const label = formatNumber(Number(v.toFixed(ax.decimals)))
      fonts.use(label, 'regular', 7)
      doc.fillColor(MUTED).text(label, px(v) - 20, top + plotHeight + 3, { width: 40, align: 'center', lineBreak: false })
    }
    for (let i = 0; i <= ay.ticks; i++) {
      const v = ay.min + i * ay.step
      const label = formatNumber(Number(v.toFixed(ay.decimals)))
      fonts.use(label, 'regular', 7)
      doc.fillColor(MUTED).text(label, MARGIN, py(v) - 4, { width: 42, align: 'right', lineBreak: false })
    }
    if (front.staircase.length > 1) {
      const [first, ...rest] = front.staircase
      doc.moveTo(px(first![0]), py(first![1]))
      for (const [x, y] of rest) doc.lineTo(px(x), py(y))
      doc.lineWidth(1.2).strokeColor(BAR).stroke()
    }
    const named = front.points.length <= 15
    for (const p of front.points) {
      const x = px(p.x)
      const y = py(p.y)
      if (p.status === 'infeasible') {
        doc.moveTo(x - 3, y - 3).lineTo(x + 3, y + 3).moveTo(x - 3, y + 3).lineTo(x + 3, y - 3).lineWidth(1).strokeColor('#9aa3ab').stroke()
      }
      else if (p.status === 'dominated') {
        doc.circle(x, y, 3).lineWidth(0.9).strokeColor('#9aa3ab').stroke()
      }
      else {
        doc.circle(x, y, 3.4).fillColor(p.status === 'weakly-efficient' ? BAR : INK).fill()
      }
      if (named && (p.status === 'efficient' || p.status === 'unsupported' || p.onFront)) {
        const name = clean(p.name)
        fonts.use(name, 'regular', 7)
        doc.fillColor(INK).text(name, Math.min(x + 5, left + plotWidth - 80), y - 9, { width: 80, lineBreak: false, ellipsis: true })
      }
    }
    const axisText = (c: PairFront['x']) => `${c.name}${c.unit ? ` (${c.unit})` : ''}, ${c.direction === 'min' ? 'lower' : 'higher'} is better`
    doc.y = top + plotHeight + 14
    text(`Across: ${axisText(front.x)}. Up: ${axisText(front.y)}.`, { size: 8, color: MUTED, gap: 2 })
    text('● efficient   ◐ weakly efficient only   ○ dominated   × outside limits   — front of the two criteria', { size: 8, color: MUTED, gap: 6 })
    doc.x = MARGIN
  }

  // ── title ──
  if (options.draft) text('DRAFT — not signed. The signed minutes are the file the secretary signs.', { size: 9, weight: 'bold', color: '#9c3f25', gap: 6 })
  text('Minutes', { size: 11, weight: 'bold', color: MUTED, gap: 0 })
  text(content.room.title, { size: 22, weight: 'bold', gap: 4 })
  text(content.room.question, { size: 12, gap: 8 })
  labelled('Date', dateOnly(content.date))
  labelled('Prepared', dateTime(content.preparedAt))
  labelled('Option table', `version ${content.ledger.version}, recorded ${dateTime(content.ledger.createdAt)}`)
  labelled('SHA-256', content.ledger.hash)
  if (content.ledger.source) {
    const { filename, size, sha256 } = content.ledger.source
    labelled('Read from', `${filename} (${fileSize(size)}), kept with the room; its SHA-256 ${sha256}`)
  }
  doc.y += 4
  text(content.caution, { size: 9, color: MUTED, gap: 4 })

  // ── resolution first: what was decided ──
  heading('Decision')
  const r = content.resolution
  if (!r) {
    text('No decision has been recorded yet.', { color: MUTED })
  }
  else {
    labelled('Chosen alternative', r.alternativeName)
    labelled('Its status', r.engineStatusLabel)
    if (r.statusStatement) text(r.statusStatement, { weight: 'bold', color: '#9c3f25', gap: 4 })
    if (r.justification) labelled('Justification', r.justification)
    labelled('Rationale', r.rationale)
    if (r.conditions) labelled('Conditions', r.conditions)
    if (r.dissent) labelled('Dissent', r.dissent)
    labelled('Recorded', `${dateTime(r.recordedAt)} by ${r.recordedBy}`)
    for (const a of content.amendments) {
      labelled(a.relation === 'amends' ? 'Amends' : 'Amended by', `the resolution of ${dateTime(a.recordedAt)} choosing ${a.alternativeName}${a.frozenAt ? ` (signed ${dateTime(a.frozenAt)})` : ''}`)
    }
  }

  // ── participants ──
  heading('Participants')
  const named = content.participants.filter(p => p.name !== null)
  for (const p of named) labelled(p.roleLabel, p.name!)
  const withheld = content.participants.filter(p => p.name === null).length
  if (withheld) labelled('Stakeholder', `${withheld} stakeholder${withheld === 1 ? '' : 's'} (names withheld)`)
  text(content.anonymityNote, { size: 9, color: MUTED })

  // ── criteria ──
  heading(`Criteria (option table version ${content.ledger.version})`)
  for (const c of content.criteria) {
    labelled(c.name, `${c.unit ? `unit ${c.unit}; ` : 'no unit; '}${c.directionLabel}; limits: ${c.limitsText}`)
  }

  // ── alternatives ──
  heading('Alternatives')
  const countLine = `${content.alternatives.length} alternatives: ${content.counts.efficient} efficient, ${content.counts['weakly-efficient']} weakly efficient only, ${content.counts.dominated} dominated, ${content.counts.infeasible} outside limits.`
  text(countLine, { color: MUTED, gap: 6 })
  for (const a of content.alternatives) {
    const symbol = STATUS_VOCABULARY[a.status].symbol
    ensure(40)
    text(`${symbol} ${a.name} — ${a.statusLabel}`, { weight: 'bold', gap: 1 })
    text(content.criteria.map((c, i) => `${c.name} ${a.scoresText[i]}`).join(' · '), { size: 9, indent: 12, gap: 1 })
    if (a.dominatedBy) {
      text(`Dominated by ${a.dominatedBy.name}${a.worseOn.length ? `; worse on ${a.worseOn.join(', ')}` : ''}.`, { size: 9, indent: 12, color: MUTED, gap: 1 })
    }
    for (const b of a.brokenLimits) text(b, { size: 9, indent: 12, color: MUTED, gap: 1 })
    doc.y += 3
  }

  if (content.front) frontChart(content.front)

  // ── rounds ──
  heading('Weighing rounds')
  if (content.rounds.length === 0) text('No weighing was revealed.', { color: MUTED })
  for (const round of content.rounds) {
    ensure(80)
    text(`Round ${round.number}${round.anonymous ? ' (anonymous)' : ''}: option table version ${round.ledgerVersion}, ${round.inputStyle}, revealed ${dateTime(round.revealedAt)}`, { weight: 'bold', gap: 3 })
    if (round.weightings.length === 0) text('No weightings were submitted.', { color: MUTED, indent: 12 })
    for (const w of round.weightings) {
      const parts = content.criteria.map((c, i) => `${c.name} ${w.weightsPercent[i]}%`).join(' · ')
      labelled(w.label, `${parts} — favours ${w.favourites.join(' = ') || '—'}`, 12)
    }
    barChart(`Favourites per alternative, round ${round.number} (stakeholders)`, round.favouredBy.map(f => ({ label: f.name, value: f.count })), v => `${Math.round(v * 100) / 100}`)
    for (const g of round.group) {
      if (!g.weightsPercent) {
        labelled(`Group (${g.ruleLabel})`, g.note ?? 'not applicable', 12)
        continue
      }
      const parts = content.criteria.map((c, i) => `${c.name} ${g.weightsPercent![i]}%`).join(' · ')
      labelled(`Group (${g.ruleLabel})`, `${parts} — favours ${g.favourites.join(' = ') || '—'}; dispersion ${g.dispersionPercent}%, agreement ${g.agreementPercent}% of stakeholders`, 12)
    }
    text(acceptabilityDrawsLine(round.acceptability), { color: MUTED, indent: 12 })
    doc.y += 4
  }

  // ── vote ──
  heading('Final vote')
  if (!content.vote) {
    text('No final vote was held.', { color: MUTED })
  }
  else {
    const v = content.vote
    text(`On option table version ${v.ledgerVersion}; opened ${dateTime(v.openedAt)}, closed ${dateTime(v.closedAt)}. ${v.cast} of ${v.eligible} stakeholders voted.`, { gap: 4 })
    for (const row of v.tally) labelled(row.name, `${row.counts.approve} approve · ${row.counts.object} object · ${row.counts.abstain} abstain`, 12)
    tallyChart(v.tally, v.eligible)
  }

  // ── audit ──
  heading('Audit trail')
  text(`${content.audit.total} entries, from ${dateTime(content.audit.first)} to ${dateTime(content.audit.last)}.`, { gap: 4 })
  for (const a of content.audit.byAction) labelled(a.action, `${a.count} ${a.count === 1 ? 'entry' : 'entries'}`, 12)

  // ── footers ──
  const range = doc.bufferedPageRange()
  const footer = `${clean(content.room.title)} · minutes${options.draft ? ' (draft)' : ''}`
  for (let i = range.start; i < range.start + range.count; i++) {
    doc.switchToPage(i)
    const line = `${footer} · page ${i + 1} of ${range.count}`
    fonts.use(line, 'regular', 8)
    // Writing inside the bottom margin must not start a new page.
    const saved = doc.page.margins.bottom
    doc.page.margins.bottom = 0
    doc.fillColor(MUTED).text(line, MARGIN, A4.height - MARGIN + 18, { width, align: 'center', lineBreak: false })
    doc.page.margins.bottom = saved
  }
  doc.end()
  return finished
}

/** A file name for the minutes of a room: letters, digits and dashes only. */
export function minutesFileName(title: string, at: Date, draft = false) {
  const slug = title.normalize('NFKD').replace(/[^\w\s-]/g, '').trim().replace(/\s+/g, '-').toLowerCase().slice(0, 60) || 'room'
  return `${slug}-minutes-${at.toISOString().slice(0, 10)}${draft ? '-draft' : ''}.pdf`
}
