import { spawn } from 'node:child_process'
import { existsSync, mkdtempSync, readdirSync, readFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { createInterface } from 'node:readline'
import { SMTPServer } from 'smtp-server'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
// @ts-expect-error plain ESM script without types
import { startMailCatcher } from '../../../scripts/lib/mailCatcher.mjs'
import { escapeHtml, sendMail } from '../../../server/utils/mail'
import { hashInvitationToken, invitationEmail, invitationStateOf, maskEmailAddress, newInvitationToken } from '../../../server/utils/invitations'

const caught = (dir: string) => readdirSync(dir).filter(name => name.endsWith('.json')).sort().map(name => JSON.parse(readFileSync(join(dir, name), 'utf8')))

/** A port nothing listens on: a catcher that was started and stopped again. */
async function closedPort() {
  const probe = await startMailCatcher({ port: 0, dir: mkdtempSync(join(tmpdir(), 'cp-mail-probe-')) })
  await probe.close()
  return probe.port as number
}

describe('the mail catcher and sendMail, over real SMTP on loopback', () => {
  let catcher: { port: number, dir: string, url: string, close: () => Promise<void> }
  const savedUrl = process.env.SMTP_URL

  beforeAll(async () => {
    catcher = await startMailCatcher({ port: 0, dir: mkdtempSync(join(tmpdir(), 'cp-mail-')) })
  })
  afterAll(async () => {
    await catcher.close()
    process.env.SMTP_URL = savedUrl
  })
  beforeEach(() => {
    process.env.SMTP_URL = catcher.url
  })

  it('delivers a message with its attachment, and the catcher stores every field as JSON', async () => {
    const before = caught(catcher.dir).length
    const pdf = Buffer.from('%PDF-1.7 not really a pdf \u0000\u0001\u0002', 'latin1')
    await sendMail({
      to: 'mara@example.org',
      subject: 'Minutes of the depot meeting',
      text: 'The minutes are attached.',
      html: '<p>The minutes are attached.</p>',
      attachments: [{ filename: 'minutes.pdf', content: pdf, contentType: 'application/pdf' }],
    })
    const messages = caught(catcher.dir)
    expect(messages).toHaveLength(before + 1)
    const message = messages.at(-1)
    expect(message.to).toEqual(['mara@example.org'])
    expect(message.from).toContain('no-reply@counterpoise.example')
    expect(message.subject).toBe('Minutes of the depot meeting')
    expect(message.text.trim()).toBe('The minutes are attached.')
    expect(message.html).toContain('<p>The minutes are attached.</p>')
    expect(Number.isNaN(Date.parse(message.date))).toBe(false)
    expect(message.attachments).toHaveLength(1)
    expect(message.attachments[0]).toMatchObject({ filename: 'minutes.pdf', contentType: 'application/pdf', size: pdf.length })
    expect(Buffer.from(message.attachments[0].content, 'base64').equals(pdf)).toBe(true)
  })

  it('uses MAIL_FROM when it is set', async () => {
    process.env.MAIL_FROM = 'Kelderwick Council <meetings@kelderwick.example>'
    try {
      await sendMail({ to: 'from-check@example.org', subject: 'From check', text: 'x' })
    }
    finally {
      delete process.env.MAIL_FROM
    }
    const from = caught(catcher.dir).at(-1).from
    expect(from).toContain('Kelderwick Council')
    expect(from).toContain('<meetings@kelderwick.example>')
  })

  it('answers 503, sending nothing, when no mail server is configured', async () => {
    delete process.env.SMTP_URL
    const before = caught(catcher.dir).length
    await expect(sendMail({ to: 'nobody@example.org', subject: 'x', text: 'x' })).rejects.toMatchObject({ statusCode: 503, message: expect.stringContaining('SMTP_URL') })
    expect(caught(catcher.dir)).toHaveLength(before)
  })

  it('answers 503 when the mail server cannot be reached', async () => {
    process.env.SMTP_URL = `smtp://127.0.0.1:${await closedPort()}`
    await expect(sendMail({ to: 'nobody@example.org', subject: 'x', text: 'x' })).rejects.toMatchObject({ statusCode: 503, message: expect.stringContaining('could not be reached') })
  })

  it('answers 503 when the mail server refuses the message', async () => {
    const refusing = new SMTPServer({
      authOptional: true,
      disabledCommands: ['STARTTLS'],
      logger: false,
      onRcptTo(_address, _session, callback) {
        callback(Object.assign(new Error('Mailbox unavailable'), { responseCode: 550 }))
      },
    })
    await new Promise<void>(resolve => refusing.listen(0, '127.0.0.1', () => resolve()))
    const { port } = refusing.server.address() as { port: number }
    process.env.SMTP_URL = `smtp://127.0.0.1:${port}`
    try {
      await expect(sendMail({ to: 'refused@example.org', subject: 'x', text: 'x' })).rejects.toMatchObject({ statusCode: 503, message: expect.stringContaining('refused') })
    }
    finally {
      await new Promise<void>(resolve => refusing.close(() => resolve()))
    }
  })

  it('ignores STARTTLS on loopback: a server offering it with its stale built-in certificate still gets the mail', async () => {
    // smtp-server's defaults (STARTTLS with a bundled, expired certificate) are what broke nodemailer before.
    let received = ''
    const offeringTls = new SMTPServer({
      authOptional: true,
      logger: false,
      onData(stream, session, callback) {
        stream.resume()
        stream.on('end', () => {
          received = session.envelope.rcptTo.map(r => r.address).join(',')
          callback()
        })
      },
    })
    await new Promise<void>(resolve => offeringTls.listen(0, '127.0.0.1', () => resolve()))
    process.env.SMTP_URL = `smtp://127.0.0.1:${(offeringTls.server.address() as { port: number }).port}`
    try {
      await sendMail({ to: 'tls@example.org', subject: 'x', text: 'x' })
      expect(received).toBe('tls@example.org')
    }
    finally {
      await new Promise<void>(resolve => offeringTls.close(() => resolve()))
    }
  })

  it('runs on its own as a script, says where it listens, and stops cleanly on SIGTERM and SIGINT', async () => {
    for (const signal of ['SIGTERM', 'SIGINT'] as const) {
      const dir = mkdtempSync(join(tmpdir(), 'cp-mail-script-'))
      const child = spawn(process.execPath, ['scripts/mail-catcher.mjs', '--port', '0', '--dir', dir], { stdio: ['ignore', 'pipe', 'inherit'] })
      const exited = new Promise<number | null>(resolve => child.once('exit', code => resolve(code)))
      const lines = createInterface({ input: child.stdout! })
      const first = await new Promise<string>(resolve => lines.once('line', resolve))
      const url = /listening on (smtp:\/\/127\.0\.0\.1:\d+)/.exec(first)?.[1]
      expect(url).toBeTruthy()
      process.env.SMTP_URL = url
      await sendMail({ to: 'script@example.org', subject: `Via the script (${signal})`, text: 'x' })
      expect(caught(dir).map(m => m.subject)).toEqual([`Via the script (${signal})`])
      child.kill(signal)
      expect(await exited).toBe(0)
    }
  })
})

describe('the invitation e-mail', () => {
  const input = {
    inviterName: 'Morwenna <b>Tallis</b>',
    roomTitle: '<script>alert("x")</script> & \'Depot\'',
    roomQuestion: 'Which site: A < B?',
    role: 'stakeholder' as const,
    link: 'http://127.0.0.1:3000/invitations/abc?x=1&y=2',
    expiresAt: new Date('2031-03-04T12:00:00Z'),
  }

  it('escapes names, titles and the link in the HTML body, and keeps the plain text readable', () => {
    const mail = invitationEmail(input)
    expect(mail.html).not.toContain('<script>')
    expect(mail.html).not.toContain('<b>')
    expect(mail.html).toContain('&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; &#39;Depot&#39;')
    expect(mail.html).toContain('Morwenna &lt;b&gt;Tallis&lt;/b&gt;')
    expect(mail.html).toContain('href="http://127.0.0.1:3000/invitations/abc?x=1&amp;y=2"')
    expect(mail.text).toContain(input.roomTitle)
    expect(mail.text).toContain(input.link)
    expect(mail.text).toContain('stakeholder')
    expect(mail.text).toContain('4 March 2031')
    expect(mail.subject).toBe(`Morwenna <b>Tallis</b> invited you to “${input.roomTitle}” on Counterpoise`)
  })

  it.each([
    ['plain', 'plain'],
    ['a & b', 'a &amp; b'],
    ['"quoted" \'single\'', '&quot;quoted&quot; &#39;single&#39;'],
    ['<img src=x onerror=alert(1)>', '&lt;img src=x onerror=alert(1)&gt;'],
    [null, ''],
  ])('escapeHtml(%j) → %j', (value, expected) => {
    expect(escapeHtml(value)).toBe(expected)
  })
})

describe('invitation tokens and states', () => {
  it('makes 32-byte base64url tokens and stores only their SHA-256', () => {
    const { token, tokenHash } = newInvitationToken()
    expect(token).toMatch(/^[\w-]{43}$/)
    expect(Buffer.from(token, 'base64url')).toHaveLength(32)
    expect(tokenHash).toMatch(/^[0-9a-f]{64}$/)
    expect(tokenHash).toBe(hashInvitationToken(token))
    expect(tokenHash).not.toContain(token)
    expect(newInvitationToken().token).not.toBe(token)
  })

  it.each([
    ['mara@example.org', 'm•••@example.org'],
    ['a@b.c', 'a•••@b.c'],
    ['odd@name@example.org', 'o•••@example.org'],
    ['@example.org', '•••'],
    ['no-at-sign', '•••'],
  ])('masks %s as %s', (email, masked) => {
    expect(maskEmailAddress(email)).toBe(masked)
  })

  const now = new Date('2030-01-01T00:00:00Z')
  it.each([
    ['pending', '2030-01-02T00:00:00Z', 'invited'],
    ['pending', '2030-01-01T00:00:00Z', 'expired'],
    ['pending', '2029-12-31T00:00:00Z', 'expired'],
    ['accepted', '2029-12-31T00:00:00Z', 'joined'],
    ['revoked', '2030-01-02T00:00:00Z', 'revoked'],
  ] as const)('a %s invitation expiring %s is %s', (status, expiresAt, state) => {
    expect(invitationStateOf({ status, expiresAt: new Date(expiresAt) }, now)).toBe(state)
  })
})

it('the catcher writes complete files only (no .part left behind)', async () => {
  const catcher = await startMailCatcher({ port: 0, dir: mkdtempSync(join(tmpdir(), 'cp-mail-part-')) })
  const saved = process.env.SMTP_URL
  process.env.SMTP_URL = catcher.url
  try {
    await sendMail({ to: 'part@example.org', subject: 'Part', text: 'x' })
    const names = readdirSync(catcher.dir)
    expect(names.filter(n => n.endsWith('.json'))).toHaveLength(1)
    expect(names.some(n => n.endsWith('.part'))).toBe(false)
    expect(existsSync(join(catcher.dir, names[0]!))).toBe(true)
  }
  finally {
    process.env.SMTP_URL = saved
    await catcher.close()
  }
})
