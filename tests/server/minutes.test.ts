/**
 * Minutes: preview, draft, signing by the secretary (which freezes the resolution), the stored
 * record, the public check, and e-mail to the members. Outside checks: Debian's `pdfsig` and
 * `pdftotext` (poppler-utils) read the signed file; `pdfsig` exits 0 even for a broken signature,
 * so its output is what is read (INTEGRATION.md). The e-mail is read from the local SMTP catcher,
 * which parses each message with mailparser and stores its attachments.
 *
 * The vote and the resolution are written straight into their tables here: this file tests the
 * minutes, not the routes that record them.
 */
import { createHash } from 'node:crypto'
import { spawnSync } from 'node:child_process'
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { pdfLiteralText } from '../../server/utils/pdfSigning'
import { seedFromText } from '../../shared/utils/weightSpace'
import { offsetInSignedStream, withFlippedByte } from '../fixtures/minutes/sampleMinutes'
import { Client, newPerson } from '../support/client'
import { closeTestDb, testDb } from '../support/db'

const baseUrl = inject('baseUrl')
const work = mkdtempSync(join(tmpdir(), 'counterpoise-minutes-test-'))

const criteria = [
  { id: 'cost', name: 'Cost', unit: '£k', direction: 'min' as const, highest: 70 },
  { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' as const },
  { id: 'speed', name: 'Delay', unit: 'weeks', direction: 'min' as const },
]
const alternatives = [
  { id: 'cheap', name: 'Cheap plan', scores: { cost: 10, reach: 100, speed: 10 } },
  { id: 'broad', name: 'Broad plan', scores: { cost: 50, reach: 900, speed: 12 } },
  { id: 'quick', name: 'Quick plan', scores: { cost: 40, reach: 300, speed: 2 } },
  // Worse than Broad plan on all three criteria: dominated by it.
  { id: 'worse', name: 'Worse plan', scores: { cost: 60, reach: 800, speed: 14 } },
  { id: 'dear', name: 'Dear plan', scores: { cost: 90, reach: 990, speed: 1 } },
]

function tool(command: string, args: string[]): string {
  const run = spawnSync(command, args, { encoding: 'utf8', env: { ...process.env, TZ: 'UTC', LC_ALL: 'C' } })
  if ((run.error as NodeJS.ErrnoException | undefined)?.code === 'ENOENT') throw new Error(`${command} is missing: apt-get install -y poppler-utils`)
  if (run.error) throw run.error
  return `${run.stdout}${run.stderr}`
}
function onDisk(pdf: Buffer, name: string) {
  const file = join(work, name)
  writeFileSync(file, pdf)
  return file
}
const pdfsig = (pdf: Buffer, name: string) => tool('pdfsig', [onDisk(pdf, name)])
const pdftotext = (pdf: Buffer, name: string) => tool('pdftotext', ['-layout', onDisk(pdf, name), '-'])
const sha256 = (bytes: Buffer) => createHash('sha256').update(bytes).digest('hex')

interface CaughtMessage { to: string[], subject: string, text: string, attachments: { filename: string | null, contentType: string, size: number, content: string }[] }
function mailTo(address: string): CaughtMessage[] {
  const dir = process.env.MAIL_DIR
  if (!dir) throw new Error('MAIL_DIR is not set: npm test starts the mail catcher and sets SMTP_URL and MAIL_DIR')
  return readdirSync(dir).filter(name => name.endsWith('.json')).sort()
    .map(name => JSON.parse(readFileSync(join(dir, name), 'utf8')) as CaughtMessage)
    .filter(m => m.to.some(to => to.toLowerCase() === address.toLowerCase()))
}

async function download(client: Client, path: string) {
  const answer = await fetch(`${baseUrl}${path}`, { headers: { cookie: client.cookie } })
  return { status: answer.status, type: answer.headers.get('content-type'), bytes: Buffer.from(await answer.arrayBuffer()) }
}

async function check(bytes: Buffer) {
  const form = new FormData()
  form.set('file', new Blob([new Uint8Array(bytes)]), 'minutes.pdf')
  const answer = await fetch(`${baseUrl}/api/minutes/check`, { method: 'POST', body: form, headers: { accept: 'application/json' } })
  return { status: answer.status, body: await answer.json() as any }
}

const title = `Depot “Ash & Oak” ${Math.random().toString(36).slice(2, 8)}`
let roomId = ''
let ledgerHash = ''
let ledgerVersionId = ''
type Who = 'facilitator' | 's1' | 's2' | 'observer' | 'secretary' | 'outsider' | 'signed-out'
const people = {} as Record<Who, Client>
const emails = {} as Record<Who, string>
const userIds = {} as Record<Who, string>

beforeAll(async () => {
  const facilitator = await newPerson(baseUrl, 'minutes-facilitator')
  people.facilitator = facilitator.client
  emails.facilitator = facilitator.email
  userIds.facilitator = facilitator.user.id
  roomId = (await facilitator.client.post('/api/rooms', { title, question: 'Which depot plan should we fund?' })).body.id
  expect((await facilitator.client.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })).status).toBe(201)
  const { rows: [version] } = await testDb().query('select id, hash from ledger_versions where room_id = $1 order by number desc limit 1', [roomId])
  ledgerHash = version.hash
  ledgerVersionId = version.id
  for (const [label, role] of [['s1', 'stakeholder'], ['s2', 'stakeholder'], ['observer', 'observer'], ['secretary', 'secretary']] as const) {
    const person = await newPerson(baseUrl, `minutes-${label}`)
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, person.user.id, role])
    people[label] = person.client
    emails[label] = person.email
    userIds[label] = person.user.id
  }
  people.outsider = (await newPerson(baseUrl, 'minutes-outsider')).client
  people['signed-out'] = new Client(baseUrl)

  // An anonymous weighing round: opened, two submissions, closed, revealed.
  const opened = await people.facilitator.post(`/api/rooms/${roomId}/weighings`, { inputStyle: 'sliders', showNames: false })
  expect(opened.status).toBe(201)
  const weighingId = opened.body.id
  for (const [label, weights] of [['s1', [0.6, 0.2, 0.2]], ['s2', [0.1, 0.8, 0.1]]] as const) {
    await testDb().query('insert into submissions (weighing_id, user_id, weights, idempotency_key) values ($1, $2, $3, $4)', [weighingId, userIds[label], JSON.stringify(weights), `key-${label}-0001`])
    // The audit entry submitWeights writes with it (server/utils/weighings.ts).
    await testDb().query('insert into audit_log (actor_id, room_id, action, details) values ($1, $2, \'weights.submitted\', $3)', [userIds[label], roomId, JSON.stringify({ weighing: 1, revision: 1, style: 'sliders' })])
  }
  expect((await people.facilitator.post(`/api/rooms/${roomId}/weighings/${weighingId}/close`)).status).toBe(200)
  expect((await people.facilitator.post(`/api/rooms/${roomId}/weighings/${weighingId}/reveal`)).status).toBe(200)

  // A closed final vote on three alternatives.
  const { rows: [vote] } = await testDb().query(`insert into votes (room_id, ledger_version_id, shortlist, status, opened_by, closed_at)
    values ($1, $2, $3, 'closed', $4, now()) returning id`, [roomId, ledgerVersionId, JSON.stringify(['broad', 'quick', 'cheap']), userIds.facilitator])
  await testDb().query('insert into ballots (vote_id, user_id, choices, idempotency_key) values ($1, $2, $3, $4), ($1, $5, $6, $7)', [
    vote.id,
    userIds.s1, JSON.stringify({ broad: 'approve', quick: 'approve', cheap: 'object' }), 'ballot-s1-0001',
    userIds.s2, JSON.stringify({ broad: 'approve', quick: 'abstain', cheap: 'object' }), 'ballot-s2-0001',
  ])
}, 60_000)

afterAll(async () => {
  await closeTestDb()
  rmSync(work, { recursive: true, force: true })
})

async function recordResolution(alternativeId: string, engineStatus: string, justification: string | null) {
  const { rows: [row] } = await testDb().query(`insert into resolutions (room_id, ledger_version_id, alternative_id, engine_status, justification, rationale, conditions, dissent, recorded_by)
    values ($1, $2, $3, $4, $5, $6, $7, $8, $9) returning id`, [roomId, ledgerVersionId, alternativeId, engineStatus, justification,
    'The site next to the ring road (rationale).', 'Only if the council leases the land.', 'One stakeholder preferred the quick plan.', userIds.facilitator])
  return row.id as string
}

describe('minutes before a decision', () => {
  it.each([
    ['facilitator', 200], ['secretary', 200], ['stakeholder s1', 403], ['observer', 403], ['outsider', 404], ['signed-out', 401],
  ])('the preview as %s → %i', async (who, expected) => {
    const answer = await people[who.replace('stakeholder ', '') as Who].get(`/api/rooms/${roomId}/minutes`)
    expect(answer.status).toBe(expected)
  })

  it('the preview carries the ledger, the pruned alternatives with their dominators, the round and the vote', async () => {
    const { body } = await people.secretary.get(`/api/rooms/${roomId}/minutes`)
    expect(body.room.title).toBe(title)
    expect(body.ledger.hash).toBe(ledgerHash)
    expect(body.resolution).toBeNull()
    const worse = body.alternatives.find((a: any) => a.id === 'worse')
    expect(worse).toMatchObject({ status: 'dominated', dominatedBy: { id: 'broad', name: 'Broad plan' } })
    // Worse plan against Broad plan: 60 > 50 £k, 800 < 900 people, 14 > 12 weeks, so worse on all three.
    expect(worse.worseOn).toEqual(['Cost', 'Reach', 'Delay'])
    expect(body.alternatives.find((a: any) => a.id === 'dear')).toMatchObject({ status: 'infeasible', brokenLimits: ['Cost 90 £k is above the highest acceptable 70 £k'] })
    expect(body.criteria[0]).toMatchObject({ unit: '£k', limitsText: 'at most 70 £k', directionLabel: 'lower is better' })
    // Anonymous round: stakeholders are counted, not named; the others are named.
    expect(body.stakeholderNamesWithheld).toBe(true)
    expect(body.participants.filter((p: any) => p.role === 'stakeholder').map((p: any) => p.name)).toEqual([null, null])
    expect(body.participants.find((p: any) => p.role === 'secretary').name).toBe('Test minutes-secretary')
    expect(JSON.stringify(body)).not.toContain('Test minutes-s1')
    expect(JSON.stringify(body)).not.toContain('@test.counterpoise.example')
    expect(body.rounds).toHaveLength(1)
    expect(body.rounds[0].weightings.map((w: any) => w.label)).toEqual(['Stakeholder 1', 'Stakeholder 2'])
    // Weights as whole percentages (largest remainder): 0.6/0.2/0.2 → 60/20/20. The anonymous labels
    // follow a keyed shuffle, not the order of submission: compare as a set.
    expect(body.rounds[0].weightings.map((w: any) => w.weightsPercent)).toEqual(expect.arrayContaining([[60, 20, 20], [10, 80, 10]]))
    expect(body.rounds[0].weightings).toHaveLength(2)
    // The draws behind the round's acceptability figures, as the weight-space view makes them: the
    // seed is the FNV-1a hash of the weighing's id (seedFromText's published test vectors are checked in the unit tests).
    const { rows: [weighing] } = await testDb().query('select id from weighings where room_id = $1', [roomId])
    expect(body.rounds[0].acceptability).toEqual({ samples: 10_000, seed: seedFromText(weighing.id) })
    expect(body.vote).toMatchObject({ cast: 2, eligible: 2 })
    expect(body.vote.tally).toEqual([
      { name: 'Broad plan', counts: { approve: 2, object: 0, abstain: 0 } },
      { name: 'Quick plan', counts: { approve: 1, object: 0, abstain: 1 } },
      { name: 'Cheap plan', counts: { approve: 0, object: 2, abstain: 0 } },
    ])
    expect(body.audit.byAction).toEqual(expect.arrayContaining([{ action: 'weighing.revealed', count: 1 }]))
    expect(body.caution).toMatch(/responsibility/i)
  })

  it('the draft PDF is unsigned and says it is a draft', async () => {
    const draft = await download(people.facilitator, `/api/rooms/${roomId}/minutes/draft.pdf`)
    expect(draft.status).toBe(200)
    expect(draft.type).toBe('application/pdf')
    expect(pdftotext(draft.bytes, 'draft.pdf')).toContain('DRAFT — not signed')
    expect(pdfsig(draft.bytes, 'draft.pdf')).toMatch(/does not contain any signatures/)
    expect((await download(people.s1, `/api/rooms/${roomId}/minutes/draft.pdf`)).status).toBe(403)
  })

  it('signing without a recorded resolution: 409 saying so, nothing stored', async () => {
    const answer = await people.secretary.post(`/api/rooms/${roomId}/minutes/sign`)
    expect(answer.status).toBe(409)
    expect(answer.body.message).toMatch(/no decision to sign yet/)
    const { rows } = await testDb().query('select count(*)::int as n from minutes_records where room_id = $1', [roomId])
    expect(rows[0].n).toBe(0)
  })
})

describe('signing, checking and sending the minutes', () => {
  let resolutionId = ''
  let record: any
  let signed: Buffer

  beforeAll(async () => {
    // The room chose a dominated alternative, with a justification.
    resolutionId = await recordResolution('worse', 'dominated', 'Only Worse plan has planning consent today.')
  })

  it.each([['facilitator', 403], ['s1', 403], ['observer', 403], ['outsider', 404], ['signed-out', 401]])('signing as %s → %i, nothing stored', async (who, expected) => {
    expect((await people[who as Who].post(`/api/rooms/${roomId}/minutes/sign`)).status).toBe(expected)
    const { rows } = await testDb().query('select count(*)::int as n from minutes_records where room_id = $1', [roomId])
    expect(rows[0].n).toBe(0)
  })

  it('the secretary signs: 201 with the record; the stored SHA-256 is the file\'s; the resolution is frozen', async () => {
    const answer = await people.secretary.post(`/api/rooms/${roomId}/minutes/sign`)
    expect(answer.status).toBe(201)
    record = answer.body
    expect(record).toMatchObject({ resolutionId, signer: 'Test minutes-secretary', sentAt: null, sentTo: 0 })
    const file = await download(people.secretary, `/api/rooms/${roomId}/minutes/records/${record.id}.pdf`)
    expect(file.status).toBe(200)
    expect(file.type).toBe('application/pdf')
    signed = file.bytes
    expect(record.bytes).toBe(signed.length)
    expect(sha256(signed)).toBe(record.sha256)
    const { rows: [stored] } = await testDb().query('select sha256, encode(sha256(pdf), \'hex\') as computed from minutes_records where id = $1', [record.id])
    expect(stored).toEqual({ sha256: record.sha256, computed: record.sha256 })
    const { rows: [resolution] } = await testDb().query('select frozen_at from resolutions where id = $1', [resolutionId])
    expect(resolution.frozen_at).toBeInstanceOf(Date)
    await expect(testDb().query('update resolutions set rationale = $1 where id = $2', ['rewritten', resolutionId])).rejects.toThrow(/frozen/)
    const { rows: audits } = await testDb().query('select details from audit_log where room_id = $1 and action = \'minutes.signed\'', [roomId])
    expect(audits).toHaveLength(1)
    expect(audits[0].details).toMatchObject({ sha256: record.sha256, resolution: resolutionId })
  })

  it('pdfsig finds the signature valid, signed in the secretary\'s name at the signing time', () => {
    const report = pdfsig(signed, 'signed.pdf')
    expect(report).toContain('Signature Validation: Signature is Valid.')
    expect(report).toMatch(/Signer Certificate Common Name: Counterpoise development signer/)
    expect(report).toMatch(/Signing Time: /)
    // The signer's name sits in the signature dictionary (/Name), beside the time (/M).
    expect(signed.toString('latin1')).toContain(`/Name (${pdfLiteralText('Test minutes-secretary')})`)
  })

  it('pdfsig finds it broken after one byte of the signed content changes', () => {
    const report = pdfsig(withFlippedByte(signed, offsetInSignedStream(signed)), 'changed.pdf')
    expect(report).toContain('Digest Mismatch')
    expect(report).not.toContain('Signature is Valid')
  })

  it('pdftotext shows the room, the ledger hash, the choice with its plain statement and a pruned alternative with its dominator', () => {
    const text = pdftotext(signed, 'signed.pdf').replace(/\s+/g, ' ')
    expect(text).toContain(title)
    expect(text).toContain(ledgerHash)
    expect(text).toContain('Chosen alternative Worse plan')
    expect(text).toContain('found it dominated: Broad plan is at least as good on every criterion and better on Cost, Reach and Delay')
    expect(text).toContain('Only Worse plan has planning consent today.')
    expect(text).toContain('Dominated by Broad plan; worse on Cost, Reach, Delay.')
    expect(text).toContain('Cost 90 £k is above the highest acceptable 70 £k')
    expect(text).toContain('2 stakeholders (names withheld)')
    expect(text).not.toContain('Test minutes-s1')
    expect(text).not.toContain('DRAFT')
  })

  it('the signed minutes name the draws behind the round\'s acceptability figures', async () => {
    const { rows: [weighing] } = await testDb().query('select id from weighings where room_id = $1', [roomId])
    const text = pdftotext(signed, 'signed-draws.pdf').replace(/\s+/g, ' ')
    expect(text).toContain(`Acceptability figures: 10,000 random weightings, seed ${seedFromText(weighing.id)}`)
  })

  it('the public check finds it valid, signed by the secretary and held here (room title, signing time and signer only); a changed copy is not', async () => {
    const answer = await check(signed)
    expect(answer.status).toBe(200)
    // Who signed: the name in the signature dictionary (/Name), and the signer this server recorded.
    expect(answer.body).toMatchObject({ valid: true, sha256: record.sha256, signerName: 'Test minutes-secretary', record: { roomTitle: title, signedAt: record.signedAt, signer: 'Test minutes-secretary' } })
    expect(Object.keys(answer.body.record).sort()).toEqual(['roomTitle', 'signedAt', 'signer'])
    const changed = await check(withFlippedByte(signed, offsetInSignedStream(signed)))
    expect(changed.body).toMatchObject({ valid: false, record: null })
  })

  it('signing again: 409 (frozen), nothing added', async () => {
    const again = await people.secretary.post(`/api/rooms/${roomId}/minutes/sign`)
    expect(again.status).toBe(409)
    expect(again.body.message).toMatch(/already signed/)
    const { rows } = await testDb().query('select count(*)::int as n from minutes_records where room_id = $1', [roomId])
    expect(rows[0].n).toBe(1)
  })

  it('the records list shows the record with its SHA-256 to the facilitator and secretary only', async () => {
    const listed = await people.facilitator.get(`/api/rooms/${roomId}/minutes/records`)
    expect(listed.status).toBe(200)
    expect(listed.body).toEqual([record])
    expect((await people.s1.get(`/api/rooms/${roomId}/minutes/records`)).status).toBe(403)
    expect((await people.outsider.get(`/api/rooms/${roomId}/minutes/records`)).status).toBe(404)
  })

  it.each([
    ['a record id without .pdf', (id: string) => id],
    ['a malformed id', () => 'not-a-record.pdf'],
    ['an unknown record', () => '00000000-0000-4000-8000-000000000000.pdf'],
  ])('downloading %s: 404', async (_label, path) => {
    expect((await download(people.secretary, `/api/rooms/${roomId}/minutes/records/${path(record.id)}`)).status).toBe(404)
  })

  it('only the secretary sends; the members receive the signed PDF attached, byte for byte', async () => {
    expect((await people.facilitator.post(`/api/rooms/${roomId}/minutes/records/${record.id}/send`)).status).toBe(403)
    expect((await people.s1.post(`/api/rooms/${roomId}/minutes/records/${record.id}/send`)).status).toBe(403)
    expect(mailTo(emails.s1)).toHaveLength(0)

    const answer = await people.secretary.post(`/api/rooms/${roomId}/minutes/records/${record.id}/send`)
    expect(answer.status).toBe(200)
    expect(answer.body).toMatchObject({ id: record.id, sentTo: 5 })
    expect(Date.parse(answer.body.sentAt)).toBeGreaterThan(Date.now() - 60_000)
    for (const label of ['facilitator', 's1', 's2', 'observer', 'secretary']) {
      const messages = mailTo(emails[label as Who])
      expect(messages, label).toHaveLength(1)
      const message = messages[0]!
      expect(message.subject).toBe(`Signed minutes of “${title}”`)
      expect(message.text).toContain(record.sha256)
      expect(message.attachments).toHaveLength(1)
      const attachment = message.attachments[0]!
      expect(attachment).toMatchObject({ filename: record.fileName, contentType: 'application/pdf' })
      expect(sha256(Buffer.from(attachment.content, 'base64'))).toBe(record.sha256)
    }
    const { rows: [stored] } = await testDb().query('select sent_at, sent_to from minutes_records where id = $1', [record.id])
    expect(stored.sent_to).toBe(5)
    const { rows: audits } = await testDb().query('select details from audit_log where room_id = $1 and action = \'minutes.sent\'', [roomId])
    expect(audits.map(a => a.details)).toEqual([{ record: record.id, recipients: 5 }])
  })

  let amendmentId = ''
  let amendment: any
  const AMENDED_RATIONALE = 'The consent for Worse plan was withdrawn on appeal.\nBroad plan reaches the most people for a cost inside the limit; the site survey stands.'

  it('an amendment of the signed resolution is signed as a second record, whose PDF says which resolution it amends', async () => {
    const recorded = await people.facilitator.post(`/api/rooms/${roomId}/resolutions`, { alternativeId: 'broad', rationale: AMENDED_RATIONALE, amends: resolutionId })
    expect(recorded.status).toBe(201)
    expect(recorded.body).toMatchObject({ amends: resolutionId, alternativeName: 'Broad plan' })
    amendmentId = recorded.body.id

    const answer = await people.secretary.post(`/api/rooms/${roomId}/minutes/sign`)
    expect(answer.status).toBe(201)
    amendment = answer.body
    expect(amendment).toMatchObject({ resolutionId: amendmentId, signer: 'Test minutes-secretary' })
    expect(amendment.id).not.toBe(record.id)
    const { rows } = await testDb().query('select resolution_id, sha256 from minutes_records where room_id = $1 order by signed_at', [roomId])
    expect(rows).toEqual([{ resolution_id: resolutionId, sha256: record.sha256 }, { resolution_id: amendmentId, sha256: amendment.sha256 }])

    const file = await download(people.secretary, `/api/rooms/${roomId}/minutes/records/${amendment.id}.pdf`)
    expect(sha256(file.bytes)).toBe(amendment.sha256)
    expect(pdfsig(file.bytes, 'amendment.pdf')).toContain('Signature Validation: Signature is Valid.')
    const text = pdftotext(file.bytes, 'amendment.pdf').replace(/\s+/g, ' ')
    expect(text).toContain('Chosen alternative Broad plan')
    expect(text).toMatch(/Amends the resolution of .{5,60}? choosing Worse plan \(signed /)
    expect(text).toContain('The consent for Worse plan was withdrawn on appeal.')
    // The first record keeps its bytes; the amended resolution stays frozen.
    expect(sha256((await download(people.secretary, `/api/rooms/${roomId}/minutes/records/${record.id}.pdf`)).bytes)).toBe(record.sha256)
    const { rows: [original] } = await testDb().query('select rationale, frozen_at from resolutions where id = $1', [resolutionId])
    expect(original.rationale).toBe('The site next to the ring road (rationale).')
    expect(original.frozen_at).toBeInstanceOf(Date)
    // Signing once more: the amendment is frozen now too.
    expect((await people.secretary.post(`/api/rooms/${roomId}/minutes/sign`)).status).toBe(409)
  })

  it('exports the full record for the archive as JSON: every resolution in full with its amendment chain, every vote with its tally, every audit entry, the signed files', async () => {
    const json = await download(people.secretary, `/api/rooms/${roomId}/minutes/export.json`)
    expect(json.status).toBe(200)
    expect(json.type).toMatch(/^application\/json/)
    const exported = JSON.parse(json.bytes.toString('utf8'))
    expect(exported).toMatchObject({ format: 'counterpoise-decision-record', formatVersion: 2 })
    expect(exported.minutes.ledger.hash).toBe(ledgerHash)
    expect(exported.minutes.resolution.id).toBe(amendmentId)

    // Resolutions, oldest first, with their whole text (compared with the database rows) and how they amend one another.
    const { rows: stored } = await testDb().query('select id, amends, alternative_id, justification, rationale, conditions, dissent, frozen_at from resolutions where room_id = $1 order by recorded_at', [roomId])
    expect(exported.resolutions.map((r: any) => r.id)).toEqual([resolutionId, amendmentId])
    for (const [i, row] of stored.entries()) {
      expect(exported.resolutions[i]).toMatchObject({
        id: row.id, amends: row.amends, alternativeId: row.alternative_id, justification: row.justification,
        rationale: row.rationale, conditions: row.conditions, dissent: row.dissent, frozenAt: row.frozen_at.toISOString(),
      })
    }
    expect(exported.resolutions[0]).toMatchObject({ amendsChain: [], amendedBy: [amendmentId], justification: 'Only Worse plan has planning consent today.', engineStatus: 'dominated' })
    expect(exported.resolutions[1]).toMatchObject({ amends: resolutionId, amendsChain: [resolutionId], amendedBy: [], rationale: AMENDED_RATIONALE, engineStatus: 'efficient' })

    // The vote with its tally (counted by hand from the two ballots above); who chose what stays out.
    expect(exported.votes).toHaveLength(1)
    expect(exported.votes[0]).toMatchObject({ status: 'closed', cast: 2, eligible: 2, shortlist: ['broad', 'quick', 'cheap'] })
    expect(exported.votes[0].tally).toEqual([
      { alternativeId: 'broad', name: 'Broad plan', approve: 2, object: 0, abstain: 0 },
      { alternativeId: 'quick', name: 'Quick plan', approve: 1, object: 0, abstain: 1 },
      { alternativeId: 'cheap', name: 'Cheap plan', approve: 0, object: 2, abstain: 0 },
    ])
    expect(exported.votes[0]).not.toHaveProperty('ballots')

    // Every audit entry of the room, oldest first, not only the counts.
    const { rows: audits } = await testDb().query('select id::int as id, action, details from audit_log where room_id = $1 order by id', [roomId])
    expect(exported.audit.map((a: any) => [a.id, a.action])).toEqual(audits.map(a => [a.id, a.action]))
    // The weighing was anonymous, so the minutes withhold stakeholders' names: so does the record.
    const personal = (action: string) => action === 'weights.submitted' || action === 'ballot.cast'
    expect(exported.audit.map((a: any) => a.details)).toEqual(audits.map(a => (personal(a.action) ? (({ style: _style, ...rest }) => rest)(a.details) : a.details)))
    const stakeholderEntries = exported.audit.filter((a: any) => personal(a.action))
    expect(stakeholderEntries.length).toBeGreaterThan(0)
    for (const entry of stakeholderEntries) {
      expect(entry.actor).toBeNull()
      expect(entry.details).not.toHaveProperty('style')
    }
    expect(JSON.stringify(exported.audit)).not.toMatch(/Test minutes-s1|Test minutes-s2/)
    expect(exported.audit.length).toBe(exported.minutes.audit.total)
    expect(exported.audit.find((a: any) => a.action === 'resolution.amended')).toMatchObject({ actor: 'Test minutes-facilitator', details: { resolution: amendmentId, amends: resolutionId } })
    expect(exported.audit.filter((a: any) => a.action === 'minutes.signed').map((a: any) => a.details.sha256)).toEqual([record.sha256, amendment.sha256])

    expect(exported.signedMinutes.map((r: any) => [r.resolutionId, r.sha256])).toEqual([[resolutionId, record.sha256], [amendmentId, amendment.sha256]])
    expect((await people.s1.get(`/api/rooms/${roomId}/minutes/export.json`)).status).toBe(403)
    expect((await people.outsider.get(`/api/rooms/${roomId}/minutes/export.json`)).status).toBe(404)
  })

  it('exports the tables as CSV', async () => {
    const csv = await download(people.facilitator, `/api/rooms/${roomId}/minutes/export.csv?table=alternatives`)
    expect(csv.status).toBe(200)
    expect(csv.type).toMatch(/^text\/csv/)
    const lines = csv.bytes.toString('utf8').replace(/^\uFEFF/, '').trim().split('\r\n')
    expect(lines[0]).toBe('"Alternative","Status","Cost (£k)","Reach (people)","Delay (weeks)","Dominated by","Worse on","Limits broken","Why set aside"')
    expect(lines).toHaveLength(1 + alternatives.length)
    expect(lines.find(l => l.startsWith('"Worse plan"'))).toContain('"Broad plan"')
    const weightings = await download(people.secretary, `/api/rooms/${roomId}/minutes/export.csv?table=weightings`)
    expect(weightings.bytes.toString('utf8')).toContain('"Stakeholder 1"')
    const wrong = await people.secretary.get(`/api/rooms/${roomId}/minutes/export.csv?table=everything`)
    expect(wrong.status).toBe(400)
    expect(wrong.body.message).toContain('alternatives, weightings, vote')
    expect((await people.s1.get(`/api/rooms/${roomId}/minutes/export.csv?table=vote`)).status).toBe(403)
  })

  it('a signed record cannot be changed or deleted in the database', async () => {
    await expect(testDb().query('update minutes_records set sha256 = $1 where id = $2', ['0'.repeat(64), record.id])).rejects.toThrow(/cannot be changed/)
    await expect(testDb().query('delete from minutes_records where id = $1', [record.id])).rejects.toThrow(/append-only/)
  })

  it('another room cannot reach this record', async () => {
    const other = await newPerson(baseUrl, 'minutes-other')
    const otherRoom = (await other.client.post('/api/rooms', { title: 'Other room', question: 'Another question here?' })).body.id
    await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, \'secretary\')', [otherRoom, userIds.secretary])
    expect((await download(people.secretary, `/api/rooms/${otherRoom}/minutes/records/${record.id}.pdf`)).status).toBe(404)
    expect((await people.secretary.post(`/api/rooms/${otherRoom}/minutes/records/${record.id}/send`)).status).toBe(404)
    // A room without a ledger has no minutes to preview: 409 saying why.
    const empty = await people.secretary.get(`/api/rooms/${otherRoom}/minutes`)
    expect(empty.status).toBe(409)
    expect(empty.body.message).toMatch(/ledger/)
  })
})

describe('the minutes CSV against formula injection', () => {
  it('an alternative whose name begins with "=" comes back with a leading apostrophe in the CSV; the JSON keeps the name as it is', async () => {
    const formula = '=HYPERLINK("http://example.org/x","Depot")'
    const room = (await people.facilitator.post('/api/rooms', { title: `Formula room ${Math.random().toString(36).slice(2, 8)}`, question: 'Which depot plan should we fund?' })).body.id
    const named = [{ ...alternatives[0]!, name: formula }, ...alternatives.slice(1, 3)]
    expect((await people.facilitator.request('PUT', `/api/rooms/${room}/ledger`, { baseVersion: 0, criteria, alternatives: named })).status).toBe(201)

    const csv = await download(people.facilitator, `/api/rooms/${room}/minutes/export.csv?table=alternatives`)
    expect(csv.status).toBe(200)
    const text = csv.bytes.toString('utf8')
    expect(text).toContain('"\'=HYPERLINK(""http://example.org/x"",""Depot"")"')
    // Read back by Python's csv module (outside the project): the first cell of the row is the name behind an apostrophe.
    const parsed = spawnSync('/usr/bin/python3', ['-c', 'import csv, json, sys; print(json.dumps([r[0] for r in csv.reader(sys.stdin.read().lstrip("\ufeff").splitlines())]))'], { input: text, encoding: 'utf8' })
    expect(parsed.status, parsed.stderr).toBe(0)
    expect(JSON.parse(parsed.stdout)).toEqual(['Alternative', `'${formula}`, 'Broad plan', 'Quick plan'])

    const json = await download(people.facilitator, `/api/rooms/${room}/minutes/export.json`)
    expect(JSON.parse(json.bytes.toString('utf8')).minutes.alternatives[0].name).toBe(formula)
  })
})
