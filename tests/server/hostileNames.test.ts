/**
 * Names with HTML, script, template and formula syntax in them stay text in what the server sends
 * out: the invitation e-mail, the signed-minutes e-mail (and its attached PDF), the CSV export,
 * and the API's own answers (which keep the text as typed: escaping belongs to the output, not
 * the store). Header injection: a line break in a title or a name never splits a mail header.
 * The e-mail is read from the local SMTP catcher (npm test), which parses each message with
 * mailparser; the PDF is read with Debian's pdftotext (poppler-utils).
 */
import { spawnSync } from 'node:child_process'
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { Client, TEST_PASSWORD, uniqueEmail } from '../support/client'
import { closeTestDb, testDb } from '../support/db'

const baseUrl = inject('baseUrl')
const work = mkdtempSync(join(tmpdir(), 'counterpoise-hostile-test-'))

/** The hostile strings, each where it fits the field's length limit. */
const H = {
  script: '<script>window.__pwned=1</script>',
  img: '<img src=x onerror="window.__pwned=1">',
  svg: '"><svg onload=alert(1)>',
  vue: '{{ 7*7 }}',
  js: 'javascript:alert(1)',
  formula: '=HYPERLINK("http://x")',
  bold: '<b>u</b>',
  amp: 'Ash & Oak \'quoted\'',
}
/** The same text as escapeHtml writes it (& < > " ' as entities). */
const escaped = (text: string) => text.replace(/[&<>"']/g, c => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', '\'': '&#39;' })[c]!)

const title = H.script
const question = `${H.svg} ${H.vue} ${H.js} ${H.formula}?`
const criteria = [
  { id: 'cost', name: H.img, unit: H.bold, direction: 'min' as const },
  { id: 'reach', name: H.svg, unit: H.vue, direction: 'max' as const },
]
const alternatives = [
  { id: 'a1', name: H.script, scores: { cost: 10, reach: 100 } },
  { id: 'a2', name: H.img, scores: { cost: 20, reach: 300 } },
  { id: 'a3', name: H.formula, scores: { cost: 30, reach: 900 } },
  { id: 'a4', name: H.vue, scores: { cost: 40, reach: 50 } },
]

interface CaughtMessage { to: string[], envelopeTo: string[], subject: string, text: string, html: string, attachments: { filename: string | null, contentType: string, content: string }[] }
function allMail(): CaughtMessage[] {
  const dir = process.env.MAIL_DIR
  if (!dir) throw new Error('MAIL_DIR is not set: npm test starts the mail catcher and sets SMTP_URL and MAIL_DIR')
  return readdirSync(dir).filter(name => name.endsWith('.json')).sort()
    .map(name => JSON.parse(readFileSync(join(dir, name), 'utf8')) as CaughtMessage)
}
const mailTo = (address: string) => allMail().filter(m => m.to.some(to => to.toLowerCase() === address.toLowerCase()))

/**
 * The HTML part holds no markup that came from a name: no script, img or svg tag, no attribute
 * starting with "on", no javascript: link. (Escaped text such as `&lt;img … onerror=` is fine: it
 * has no raw "<".)
 */
function expectNoInjectedMarkup(html: string) {
  expect(html).not.toMatch(/<script/i)
  expect(html).not.toMatch(/<img/i)
  expect(html).not.toMatch(/<svg/i)
  expect(html).not.toMatch(/<b>u<\/b>/)
  // A raw tag with an on… attribute (e.g. <img onerror=…>) anywhere.
  expect(html).not.toMatch(/<[a-z][^>]*\son\w+\s*=/i)
  expect(html).not.toMatch(/href\s*=\s*["']?\s*javascript:/i)
}

async function signUp(displayName: string, label: string) {
  const client = new Client(baseUrl)
  const email = uniqueEmail(label)
  const answer = await client.post('/api/auth/sign-up', { displayName, email, password: TEST_PASSWORD })
  return { client, email, answer }
}
async function person(displayName: string, label: string) {
  const made = await signUp(displayName, label)
  expect(made.answer.status, JSON.stringify(made.answer.body)).toBe(201)
  return { client: made.client, email: made.email, id: made.answer.body.id as string }
}

let roomId = ''
let facilitator: Awaited<ReturnType<typeof person>>
let secretary: Awaited<ReturnType<typeof person>>
let stakeholder: Awaited<ReturnType<typeof person>>

beforeAll(async () => {
  facilitator = await person(H.img, 'hostile-facilitator')
  secretary = await person(H.svg, 'hostile-secretary')
  stakeholder = await person(H.vue, 'hostile-stakeholder')
  const room = await facilitator.client.post('/api/rooms', { title, question })
  expect(room.status, JSON.stringify(room.body)).toBe(201)
  roomId = room.body.id
  const ledger = await facilitator.client.request('PUT', `/api/rooms/${roomId}/ledger`, { baseVersion: 0, criteria, alternatives })
  expect(ledger.status, JSON.stringify(ledger.body)).toBe(201)
  await testDb().query('insert into room_members (room_id, user_id, role) values ($1, $2, \'secretary\'), ($1, $3, \'stakeholder\')', [roomId, secretary.id, stakeholder.id])
}, 60_000)

afterAll(async () => {
  await closeTestDb()
  rmSync(work, { recursive: true, force: true })
})

describe('the API keeps hostile names as typed', () => {
  it('room, ledger and members come back unchanged (not escaped, not stripped)', async () => {
    const room = await facilitator.client.get(`/api/rooms/${roomId}`)
    expect(room.status).toBe(200)
    expect(room.body).toMatchObject({ title, question })
    const ledger = await facilitator.client.get(`/api/rooms/${roomId}/ledger`)
    expect(ledger.status).toBe(200)
    expect(ledger.body.alternatives.map((a: { name: string }) => a.name)).toEqual(alternatives.map(a => a.name))
    expect(ledger.body.criteria.map((c: { name: string, unit: string }) => [c.name, c.unit])).toEqual(criteria.map(c => [c.name, c.unit]))
  })

  it('the CSV export keeps the formula as text (apostrophe first) and the markup as typed', async () => {
    const answer = await fetch(`${baseUrl}/api/rooms/${roomId}/ledger/export.csv`, { headers: { cookie: facilitator.client.cookie } })
    expect(answer.status).toBe(200)
    const csv = await answer.text()
    expect(csv).toContain('\'=HYPERLINK(""http://x"")')
    expect(csv).not.toMatch(/(^|,)"?=HYPERLINK/m)
    expect(csv).toContain(H.script)
  })
})

describe('the invitation e-mail', () => {
  it('has every name escaped in its HTML part and literal in its plain-text part', async () => {
    const invitee = uniqueEmail('hostile-invitee')
    const answer = await facilitator.client.post(`/api/rooms/${roomId}/invitations`, { email: invitee, role: 'stakeholder' })
    expect(answer.status, JSON.stringify(answer.body)).toBe(201)
    const messages = mailTo(invitee)
    expect(messages).toHaveLength(1)
    const message = messages[0]!
    // Plain text: the names as typed.
    expect(message.text).toContain(H.img) // the inviter
    expect(message.text).toContain(title)
    expect(message.text).toContain(question)
    // HTML: the same names, escaped; no markup from them.
    expect(message.html).toContain(escaped(H.img))
    expect(message.html).toContain('&lt;script&gt;window.__pwned=1&lt;/script&gt;')
    expect(message.html).toContain(escaped(question))
    expect(message.html).toContain(H.vue) // no HTML in it: as typed (mail is never a Vue template)
    expectNoInjectedMarkup(message.html)
    // The subject is one line carrying the names as typed.
    expect(message.subject).toBe(`${H.img} invited you to “${title}” on Counterpoise`)
  })

  it('the check above can fail: the same assertions reject an unescaped copy of the message', () => {
    const raw = `<p>${H.img} invited you to <strong>${title}</strong></p>`
    expect(() => expectNoInjectedMarkup(raw)).toThrow()
    expect(() => expectNoInjectedMarkup(`<p>${H.svg}</p>`)).toThrow()
    expect(() => expectNoInjectedMarkup(`<p>${escaped(H.img)}</p>`)).not.toThrow()
  })
})

describe('line breaks in names cannot add mail headers', () => {
  const BCC = 'bcc-victim@test.counterpoise.example'

  it('a room title with CR LF "Bcc:" is refused (400) or stays on the one subject line', async () => {
    const room = await facilitator.client.post('/api/rooms', { title: `Harbour\r\nBcc: ${BCC}`, question: 'Which harbour plan should we fund?' })
    if (room.status === 400) return
    expect(room.status).toBe(201)
    const invitee = uniqueEmail('header-invitee')
    expect((await facilitator.client.post(`/api/rooms/${room.body.id}/invitations`, { email: invitee, role: 'observer' })).status).toBe(201)
    const [message] = mailTo(invitee)
    expect(message).toBeDefined()
    expect(message!.subject).not.toMatch(/[\r\n]/)
    expect(message!.subject).toContain(`Harbour Bcc: ${BCC}`)
    expect(message!.envelopeTo).toEqual([invitee])
    expect(allMail().filter(m => m.envelopeTo.includes(BCC) || m.to.includes(BCC))).toEqual([])
  })

  it('a display name with CR LF "Bcc:" is refused (400) or stays on the one subject line', async () => {
    const made = await signUp(`Evil\r\nBcc: ${BCC}`, 'header-inviter')
    if (made.answer.status === 400) return
    expect(made.answer.status).toBe(201)
    const room = await made.client.post('/api/rooms', { title: 'Header check', question: 'Does the subject stay on one line?' })
    expect(room.status).toBe(201)
    const invitee = uniqueEmail('header-invitee2')
    expect((await made.client.post(`/api/rooms/${room.body.id}/invitations`, { email: invitee, role: 'observer' })).status).toBe(201)
    const [message] = mailTo(invitee)
    expect(message).toBeDefined()
    expect(message!.subject).not.toMatch(/[\r\n]/)
    expect(message!.subject).toMatch(/^Evil\s+Bcc: /)
    expect(message!.envelopeTo).toEqual([invitee])
    expect(allMail().filter(m => m.envelopeTo.includes(BCC) || m.to.includes(BCC))).toEqual([])
  })
})

describe('the signed minutes', () => {
  let record: { id: string, sha256: string, fileName: string }

  beforeAll(async () => {
    const resolution = await facilitator.client.post(`/api/rooms/${roomId}/resolutions`, {
      alternativeId: 'a2',
      rationale: `${H.script} ${H.img}`,
      conditions: H.vue,
      dissent: H.formula,
    })
    expect(resolution.status, JSON.stringify(resolution.body)).toBe(201)
  })

  it('the preview (the page\'s data) carries the names as typed', async () => {
    const preview = await secretary.client.get(`/api/rooms/${roomId}/minutes`)
    expect(preview.status).toBe(200)
    expect(preview.body.room.title).toBe(title)
    expect(JSON.stringify(preview.body)).not.toContain('&lt;')
  })

  it('signed and sent: each member\'s e-mail escapes every name in HTML, keeps them literal in text, and the PDF shows them as text', async () => {
    const signed = await secretary.client.post(`/api/rooms/${roomId}/minutes/sign`)
    expect(signed.status, JSON.stringify(signed.body)).toBe(201)
    record = signed.body
    // The file name is a slug: nothing from the title but letters, digits and dashes.
    expect(record.fileName).toMatch(/^[\w-]+\.pdf$/)
    const sent = await secretary.client.post(`/api/rooms/${roomId}/minutes/records/${record.id}/send`)
    expect(sent.status, JSON.stringify(sent.body)).toBe(200)
    expect(sent.body.sentTo).toBe(3)

    for (const [who, address, name] of [['facilitator', facilitator.email, H.img], ['secretary', secretary.email, H.svg], ['stakeholder', stakeholder.email, H.vue]] as const) {
      const messages = mailTo(address).filter(m => m.subject.startsWith('Signed minutes'))
      expect(messages, who).toHaveLength(1)
      const message = messages[0]!
      expect(message.subject).toBe(`Signed minutes of “${title}”`)
      expect(message.text).toContain(`Hello ${name},`)
      expect(message.text).toContain(`${H.svg} sends you the signed minutes of “${title}” (${question})`)
      expect(message.text).toContain(`They were signed by ${H.svg}`)
      expect(message.html).toContain(`Hello ${escaped(name)},`)
      expect(message.html).toContain(`${escaped(H.svg)} sends you the signed minutes of <strong>&lt;script&gt;window.__pwned=1&lt;/script&gt;</strong>`)
      expectNoInjectedMarkup(message.html)
      expect(message.attachments).toHaveLength(1)
      expect(message.attachments[0]!.filename).toBe(record.fileName)
    }

    // The attached PDF (pdftotext, Debian poppler-utils): the names as literal text.
    const attachment = mailTo(secretary.email).find(m => m.subject.startsWith('Signed minutes'))!.attachments[0]!
    const file = join(work, 'signed.pdf')
    writeFileSync(file, Buffer.from(attachment.content, 'base64'))
    const run = spawnSync('pdftotext', ['-layout', file, '-'], { encoding: 'utf8', env: { ...process.env, LC_ALL: 'C.UTF-8' } })
    if ((run.error as NodeJS.ErrnoException | undefined)?.code === 'ENOENT') throw new Error('pdftotext is missing: apt-get install -y poppler-utils')
    const text = run.stdout.replace(/\s+/g, ' ')
    for (const literal of [H.script, H.img, H.svg, H.formula]) expect(text).toContain(literal)
  })
})
