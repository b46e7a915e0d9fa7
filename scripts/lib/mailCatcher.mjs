// A local SMTP server for development and tests: every message it receives is kept as one JSON file,
// so the app sends real mail over SMTP and people (or tests) read it without a hosted service.
// Plain Node ESM; imports only smtp-server and mailparser.
import { randomBytes } from 'node:crypto'
import { mkdirSync, renameSync, writeFileSync } from 'node:fs'
import { join, resolve } from 'node:path'
import { simpleParser } from 'mailparser'
import { SMTPServer } from 'smtp-server'

/** Largest message accepted (bytes); larger ones are refused with 552 and not stored. */
export const MAX_MESSAGE_BYTES = 25 * 1024 * 1024

const addressList = field => (field ? [field].flat().flatMap(group => group.value.map(a => a.address ?? '')).filter(Boolean) : [])

/** The stored shape: what a person or a test needs to read a message and follow its links. */
export function messageRecord(parsed, envelope) {
  return {
    from: parsed.from?.text ?? envelope.mailFrom?.address ?? '',
    to: addressList(parsed.to).length ? addressList(parsed.to) : envelope.rcptTo.map(r => r.address),
    envelopeTo: envelope.rcptTo.map(r => r.address),
    subject: parsed.subject ?? '',
    text: parsed.text ?? '',
    html: typeof parsed.html === 'string' ? parsed.html : '',
    date: (parsed.date ?? new Date()).toISOString(),
    receivedAt: new Date().toISOString(),
    messageId: parsed.messageId ?? null,
    attachments: (parsed.attachments ?? []).map(a => ({
      filename: a.filename ?? null,
      contentType: a.contentType,
      size: a.size,
      content: a.content.toString('base64'),
    })),
  }
}

/**
 * Start the catcher on 127.0.0.1. `port: 0` picks a free port (read it from the result).
 * Each message is written to `dir` as `<time>-<random>.json` before the server answers 250,
 * so once the sender's SMTP transaction succeeds the file is there.
 * @returns {Promise<{ port: number, dir: string, url: string, close: () => Promise<void> }>}
 */
export async function startMailCatcher({ port = 2525, dir = '.data/mail', host = '127.0.0.1', quiet = true } = {}) {
  const directory = resolve(dir)
  mkdirSync(directory, { recursive: true })
  const server = new SMTPServer({
    // smtp-server's bundled STARTTLS certificate has expired and it requires auth by default;
    // both break nodemailer against a loopback catcher (see INTEGRATION.md, e-mail).
    authOptional: true,
    disabledCommands: ['STARTTLS'],
    size: MAX_MESSAGE_BYTES,
    logger: false,
    banner: 'Counterpoise mail catcher (development only)',
    onData(stream, session, callback) {
      simpleParser(stream)
        .then((parsed) => {
          if (stream.sizeExceeded) {
            const error = new Error('Message too large for the mail catcher')
            error.responseCode = 552
            throw error
          }
          const name = `${Date.now().toString().padStart(14, '0')}-${randomBytes(4).toString('hex')}.json`
          const file = join(directory, name)
          // Write then rename, so a reader never sees half a file.
          writeFileSync(`${file}.part`, JSON.stringify(messageRecord(parsed, session.envelope), null, 2))
          renameSync(`${file}.part`, file)
          if (!quiet) console.log(`[mail-catcher] ${session.envelope.rcptTo.map(r => r.address).join(', ')}: ${parsed.subject ?? '(no subject)'}`)
          callback(null, `Stored as ${name}`)
        })
        .catch(error => callback(error))
    },
  })
  let listening = false
  // Errors while starting reject below (EADDRINUSE lets a caller try another port); later ones are logged.
  server.on('error', (error) => {
    if (listening) console.error('[mail-catcher]', error.message)
  })
  await new Promise((resolvePromise, reject) => {
    const failed = error => reject(error)
    server.server.once('error', failed)
    server.listen(port, host, () => {
      server.server.off('error', failed)
      listening = true
      resolvePromise()
    })
  })
  const actualPort = server.server.address().port
  return {
    port: actualPort,
    dir: directory,
    url: `smtp://${host}:${actualPort}`,
    close: () => new Promise(done => server.close(() => done())),
  }
}
