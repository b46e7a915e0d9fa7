import { readdir, readFile } from 'node:fs/promises'
import { join, resolve } from 'node:path'

const MAX_MESSAGES = 100

interface CaughtMessage {
  from: string
  to: string[]
  subject: string
  text: string
  date: string
  attachments: { filename: string | null, contentType: string, size: number }[]
}

/**
 * Development only: the messages the local mail catcher (scripts/mail-catcher.mjs) has stored,
 * newest first. Answers 404 unless COUNTERPOISE_DEV_MAIL=1, so a deployed server shows nothing;
 * and even then only to this machine itself (loopback) or a site administrator, because caught
 * invitations carry links that let their holder into a room.
 */
export default defineEventHandler(async (event) => {
  if (process.env.COUNTERPOISE_DEV_MAIL !== '1') throw createError({ statusCode: 404, message: 'Not found.' })
  const address = event.node.req.socket.remoteAddress ?? ''
  const loopback = address === '::1' || address.startsWith('127.') || address.startsWith('::ffff:127.')
  if (!loopback) {
    // The role is read from the database: the cookie may predate a change, or have been ended.
    const { account } = await currentUserSession(event)
    if (account?.siteRole !== 'admin') throw createError({ statusCode: 404, message: 'Not found.' })
  }
  const dir = resolve(process.env.MAIL_DIR || '.data/mail')
  // No directory yet simply means no mail yet.
  const names = (await readdir(dir).catch(() => [] as string[])).filter(name => name.endsWith('.json'))
  // File names start with the arrival time, so the newest sort last.
  names.sort().reverse()
  const messages = []
  for (const name of names.slice(0, MAX_MESSAGES)) {
    try {
      const m = JSON.parse(await readFile(join(dir, name), 'utf8')) as CaughtMessage
      messages.push({
        id: name.replace(/\.json$/, ''),
        from: m.from,
        to: m.to,
        subject: m.subject,
        text: m.text,
        date: m.date,
        attachments: (m.attachments ?? []).map(a => ({ filename: a.filename, contentType: a.contentType, size: a.size })),
      })
    }
    catch { /* a file being written or not ours: skip it */ }
  }
  setResponseHeader(event, 'Cache-Control', 'no-store')
  return { dir, messages }
})
