import { createHash } from 'node:crypto'
import { readFileSync } from 'node:fs'
import { join } from 'node:path'
import { io as connect, type Socket } from 'socket.io-client'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { MAX_ALTERNATIVES } from '../../shared/schemas/ledger'
import { ROOM_ROLES } from '../../shared/roles'
import { MAX_UPLOAD_BYTES } from '../../shared/types/ledgerImport'
import type { Ack, ClientToServerEvents, JoinedRoom, ServerToClientEvents } from '../../shared/types/realtime'
import { Client, newPerson } from '../support/client'
import { closeTestDb, count, testDb } from '../support/db'
import { MALFORMED_FILES, generatedCsv, oversizedCsv } from '../fixtures/uploads/expected'
import { KELDERWICK_ALTERNATIVES, KELDERWICK_CRITERIA } from '../fixtures/uploads/kelderwick'

const baseUrl = inject('baseUrl')
afterAll(closeTestDb)

const FIXTURES = join(import.meta.dirname, '../fixtures/uploads')
const fixture = (name: string) => readFileSync(join(FIXTURES, name))

interface Sent { file?: { name: string, bytes: Buffer }, mode?: string, baseVersion?: number | string }

/** POST the import route as a browser's FormData would, with the client's session cookie. */
async function upload(client: Client, roomId: string, sent: Sent) {
  const form = new FormData()
  if (sent.file) form.set('file', new Blob([new Uint8Array(sent.file.bytes)]), sent.file.name)
  if (sent.mode !== undefined) form.set('mode', sent.mode)
  if (sent.baseVersion !== undefined) form.set('baseVersion', String(sent.baseVersion))
  const headers: Record<string, string> = { accept: 'application/json' }
  if (client.cookie) headers.cookie = client.cookie
  const answer = await fetch(`${baseUrl}/api/rooms/${roomId}/ledger/import`, { method: 'POST', body: form, headers })
  const text = await answer.text()
  let body: any = text
  try {
    body = JSON.parse(text)
  }
  catch { /* not JSON */ }
  return { status: answer.status, body }
}

const send = (client: Client, roomId: string, name: string, bytes: Buffer, mode: 'preview' | 'confirm', baseVersion: number) =>
  upload(client, roomId, { file: { name, bytes }, mode, baseVersion })

/** A room whose ledger has the Kelderwick criteria and no alternatives (version 1). */
async function roomWithCriteria(client: Client, title = 'Upload room') {
  const room = await client.post('/api/rooms', { title, question: 'Which scheme should go forward?' })
  expect(room.status).toBe(201)
  const ledger = await client.request('PUT', `/api/rooms/${room.body.id}/ledger`, { baseVersion: 0, criteria: KELDERWICK_CRITERIA, alternatives: [] })
  expect(ledger.status).toBe(201)
  return room.body.id as string
}

/** What the upload could have written for a room. */
async function written(roomId: string) {
  return {
    versions: await count('ledger_versions', 'room_id = $1', [roomId]),
    attachments: await count('attachments', 'room_id = $1', [roomId]),
    uploads: await count('audit_log', 'room_id = $1 and action = \'ledger.uploaded\'', [roomId]),
  }
}

describe('uploading alternatives: malformed files', () => {
  let facilitator: Client
  let roomId = ''
  beforeAll(async () => {
    facilitator = (await newPerson(baseUrl, 'uploader')).client
    roomId = await roomWithCriteria(facilitator)
  })

  it.each(MALFORMED_FILES.map(e => [e.file, e] as const))('%s: the preview names the problem, and confirming is refused with nothing written', async (name, expected) => {
    const before = await written(roomId)
    const preview = await send(facilitator, roomId, name, fixture(name), 'preview', 1)
    expect(preview.status).toBe(200)
    expect(preview.body.problemTotal).toBe(1)
    expect(preview.body.problems[0]).toMatchObject({ code: expected.code, ...(expected.row ? { row: expected.row } : {}), ...(expected.column ? { column: expected.column } : {}) })
    expect(preview.body.groups[0].summary).toEqual(expect.any(String))

    const confirm = await send(facilitator, roomId, name, fixture(name), 'confirm', 1)
    expect(confirm.status).toBe(422)
    expect(confirm.body.message).toContain('nothing was saved')
    expect(confirm.body.data.problems[0].code).toBe(expected.code)
    expect(await written(roomId)).toEqual(before)
  })

  it('refuses more than the row limit: listed in the preview, 422 on confirm', async () => {
    const bytes = generatedCsv(MAX_ALTERNATIVES + 1)
    const before = await written(roomId)
    const preview = await send(facilitator, roomId, 'many.csv', bytes, 'preview', 1)
    expect(preview.status).toBe(200)
    expect(preview.body.problems.map((p: { code: string }) => p.code)).toEqual(['too-many-rows'])
    expect(preview.body.rowCount).toBe(MAX_ALTERNATIVES + 1)
    expect((await send(facilitator, roomId, 'many.csv', bytes, 'confirm', 1)).status).toBe(422)
    expect(await written(roomId)).toEqual(before)
  })

  it('refuses a file over 5 MB with 413 and a message, for preview and confirm alike', async () => {
    const bytes = oversizedCsv(MAX_UPLOAD_BYTES)
    const before = await written(roomId)
    for (const mode of ['preview', 'confirm'] as const) {
      const answer = await send(facilitator, roomId, 'big.csv', bytes, mode, 1)
      expect(answer.status).toBe(413)
      expect(answer.body.message).toMatch(/largest file accepted is 5 MB/)
    }
    expect(await written(roomId)).toEqual(before)
  })

  it.each([
    ['no file', { mode: 'preview', baseVersion: 1 }, 'file'],
    ['no mode', { file: { name: 'kelderwick.csv', bytes: fixture('kelderwick.csv') }, baseVersion: 1 }, 'mode'],
    ['an unknown mode', { file: { name: 'kelderwick.csv', bytes: fixture('kelderwick.csv') }, mode: 'save', baseVersion: 1 }, 'mode'],
    ['a baseVersion that is not a number', { file: { name: 'kelderwick.csv', bytes: fixture('kelderwick.csv') }, mode: 'confirm', baseVersion: 'latest' }, 'baseVersion'],
  ] as const)('answers 400 for %s, naming the field', async (_label, sent, field) => {
    const before = await written(roomId)
    const answer = await upload(facilitator, roomId, sent as Sent)
    expect(answer.status).toBe(400)
    expect(answer.body.data.fieldErrors[field]).toEqual(expect.any(String))
    expect(await written(roomId)).toEqual(before)
  })

  it('answers 400 for a body that is not multipart', async () => {
    expect((await facilitator.post(`/api/rooms/${roomId}/ledger/import`, { mode: 'preview' })).status).toBe(400)
  })
})

describe('uploading alternatives: a clean file', () => {
  let facilitator: Client
  let userId = ''
  let roomId = ''
  beforeAll(async () => {
    const person = await newPerson(baseUrl, 'clean-uploader')
    facilitator = person.client
    userId = person.user.id
    roomId = await roomWithCriteria(facilitator, 'Clean upload room')
  })

  it('previews without writing, then confirms into a new version citing the stored file', async () => {
    const bytes = fixture('kelderwick.csv')
    const before = await written(roomId)
    const preview = await send(facilitator, roomId, 'kelderwick.csv', bytes, 'preview', 1)
    expect(preview.status).toBe(200)
    expect(preview.body).toMatchObject({ filename: 'kelderwick.csv', format: 'csv', delimiter: ',', rowCount: 9, problemTotal: 0, baseVersion: 1, kept: 0, removed: [] })
    expect(preview.body.preview.map(({ name, scores }: { name: string, scores: unknown }) => ({ name, scores }))).toEqual(KELDERWICK_ALTERNATIVES)
    expect(await written(roomId)).toEqual(before)

    // A page of the room that is open meanwhile hears of the new version (and reloads its table).
    const socket: Socket<ServerToClientEvents, ClientToServerEvents> = connect(baseUrl, { extraHeaders: { cookie: facilitator.cookie }, transports: ['websocket'], reconnection: false, forceNew: true })
    try {
      const joined = await new Promise<Ack<JoinedRoom>>(resolve => socket.emit('room:join', { roomId }, resolve))
      expect(joined.ok).toBe(true)
      const heard = new Promise<{ roomId: string, version: number }>(resolve => socket.once('ledger:changed', resolve))

      const confirm = await send(facilitator, roomId, 'kelderwick.csv', bytes, 'confirm', 1)
      expect(confirm.status).toBe(201)
      expect(confirm.body.version).toMatchObject({ number: 2, note: 'Uploaded kelderwick.csv' })
      expect(await heard).toEqual({ roomId, version: 2 })
    }
    finally {
      socket.disconnect()
    }
    const confirm = await facilitator.get(`/api/rooms/${roomId}/ledger`)
    expect(confirm.body.alternatives.map(({ name, scores }: { name: string, scores: unknown }) => ({ name, scores }))).toEqual(KELDERWICK_ALTERNATIVES)
    expect(confirm.body.analysis.counts.infeasible).toBe(1) // Managed realignment breaks the 12 ha limit
    expect(await written(roomId)).toEqual({ versions: before.versions + 1, attachments: before.attachments + 1, uploads: before.uploads + 1 })

    const { rows: [stored] } = await testDb().query('select filename, media_type, size, sha256, content, uploaded_by from attachments where id = $1 and room_id = $2', [confirm.body.version.attachmentId, roomId])
    expect(stored).toMatchObject({ filename: 'kelderwick.csv', media_type: 'text/csv', size: bytes.length, uploaded_by: userId })
    expect(stored.sha256).toBe(createHash('sha256').update(bytes).digest('hex'))
    expect(Buffer.compare(stored.content, bytes)).toBe(0)
    const audit = await testDb().query('select actor_id, details from audit_log where room_id = $1 and action = \'ledger.uploaded\'', [roomId])
    expect(audit.rows[0]).toMatchObject({ actor_id: userId, details: { filename: 'kelderwick.csv', rows: 9, version: 2 } })
    // The minutes cite the file the table was read from.
    const minutes = await facilitator.get(`/api/rooms/${roomId}/minutes`)
    expect(minutes.status).toBe(200)
    expect(minutes.body.ledger).toMatchObject({ version: 2, source: { filename: 'kelderwick.csv', size: bytes.length, sha256: stored.sha256 } })
  })

  it('stores nothing for a workbook with the same table (the names keep their ids)', async () => {
    const before = await written(roomId)
    const preview = await send(facilitator, roomId, 'kelderwick.xlsx', fixture('kelderwick.xlsx'), 'preview', 2)
    expect(preview.body).toMatchObject({ format: 'xlsx', sheet: 'Options', kept: 9, problemTotal: 0 })
    const confirm = await send(facilitator, roomId, 'kelderwick.xlsx', fixture('kelderwick.xlsx'), 'confirm', 2)
    expect(confirm.status).toBe(200)
    expect(confirm.body.version.number).toBe(2)
    expect(await written(roomId)).toEqual(before)
  })

  it('keeps the ids of alternatives whose names match, and removes those the file leaves out', async () => {
    const ids = new Map<string, string>((await facilitator.get(`/api/rooms/${roomId}/ledger`)).body.alternatives.map((a: { name: string, id: string }) => [a.name, a.id]))
    const text = fixture('kelderwick.csv').toString('utf8').split('\r\n').filter(line => !line.startsWith('Dune restoration')).join('\r\n').replace('Rock revetment,9.4', 'ROCK REVETMENT,9.9')
    const confirm = await send(facilitator, roomId, 'revised.csv', Buffer.from(text), 'confirm', 2)
    expect(confirm.status).toBe(201)
    expect(confirm.body.version.number).toBe(3)
    expect(confirm.body.alternatives).toHaveLength(8)
    for (const alternative of confirm.body.alternatives) {
      expect(alternative.id).toBe(ids.get(alternative.name === 'ROCK REVETMENT' ? 'Rock revetment' : alternative.name))
    }
    expect(confirm.body.alternatives.find((a: { name: string }) => a.name === 'ROCK REVETMENT').scores.cost).toBe(9.9)
  })

  it('refuses a confirm based on an older version (409), writing nothing', async () => {
    const before = await written(roomId)
    const confirm = await send(facilitator, roomId, 'kelderwick.csv', fixture('kelderwick-semicolon.csv'), 'confirm', 1)
    expect(confirm.status).toBe(409)
    expect(await written(roomId)).toEqual(before)
  })

  it('previews and confirms a file of 10,000 alternatives', async () => {
    const bytes = generatedCsv(10_000)
    const preview = await send(facilitator, roomId, 'ten-thousand.csv', bytes, 'preview', 3)
    expect(preview.status).toBe(200)
    expect(preview.body.rowCount).toBe(10_000)
    expect(preview.body.preview).toHaveLength(200)
    expect(preview.body.problemTotal).toBe(0)
    expect(preview.body.removed).toHaveLength(8)
    const confirm = await send(facilitator, roomId, 'ten-thousand.csv', bytes, 'confirm', 3)
    expect(confirm.status).toBe(201)
    expect(confirm.body.version.number).toBe(4)
    expect(confirm.body.alternatives).toHaveLength(10_000)
    expect(await count('attachments', 'room_id = $1 and size = $2', [roomId, bytes.length])).toBe(1)
  })

  it('asks for the criteria first in a room without a ledger (409)', async () => {
    const room = await facilitator.post('/api/rooms', { title: 'Empty room', question: 'Which scheme should go forward?' })
    const answer = await send(facilitator, room.body.id, 'kelderwick.csv', fixture('kelderwick.csv'), 'preview', 0)
    expect(answer.status).toBe(409)
    expect(answer.body.message).toMatch(/Define the criteria first/)
    expect(await written(room.body.id)).toEqual({ versions: 0, attachments: 0, uploads: 0 })
  })
})

describe('uploading alternatives: who may', () => {
  const people: Record<string, Client> = {}
  let roomId = ''
  beforeAll(async () => {
    people.facilitator = (await newPerson(baseUrl, 'upload-facilitator')).client
    roomId = await roomWithCriteria(people.facilitator, 'Upload roles room')
    for (const role of ROOM_ROLES.filter(r => r !== 'facilitator')) {
      const person = await newPerson(baseUrl, `upload-${role}`)
      await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, $3)', [roomId, person.user.id, role])
      people[role] = person.client
    }
    people.outsider = (await newPerson(baseUrl, 'upload-outsider')).client
    people['signed-out'] = new Client(baseUrl)
  })

  it.each([
    ['facilitator', 'preview', 200],
    ['stakeholder', 'preview', 403],
    ['observer', 'preview', 403],
    ['secretary', 'preview', 403],
    ['outsider', 'preview', 404],
    ['signed-out', 'preview', 401],
    ['stakeholder', 'confirm', 403],
    ['observer', 'confirm', 403],
    ['secretary', 'confirm', 403],
    ['outsider', 'confirm', 404],
    ['signed-out', 'confirm', 401],
  ] as const)('%s, %s → %i', async (who, mode, status) => {
    const before = await written(roomId)
    expect((await send(people[who]!, roomId, 'kelderwick.csv', fixture('kelderwick.csv'), mode, 1)).status).toBe(status)
    expect(await written(roomId)).toEqual(before)
  })

  it('lets the facilitator confirm', async () => {
    expect((await send(people.facilitator!, roomId, 'kelderwick.csv', fixture('kelderwick.csv'), 'confirm', 1)).status).toBe(201)
  })
})
