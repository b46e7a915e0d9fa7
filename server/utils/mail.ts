import { createError } from 'h3'
import nodemailer, { type Transporter } from 'nodemailer'

export const DEFAULT_MAIL_FROM = 'Counterpoise <no-reply@counterpoise.example>'

export interface MailAttachment {
  filename: string
  content: Buffer | string
  contentType?: string
}

export interface OutgoingMail {
  to: string
  subject: string
  text: string
  /** Already-escaped HTML: build it with `escapeHtml` around every name, title or address. */
  html?: string
  attachments?: MailAttachment[]
}

const HTML_ESCAPES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', '\'': '&#39;' }

/** Text made safe to place in HTML, both between tags and inside a quoted attribute. */
export function escapeHtml(value: unknown): string {
  return String(value ?? '').replace(/[&<>"']/g, c => HTML_ESCAPES[c]!)
}

const LOOPBACK = new Set(['127.0.0.1', 'localhost', '[::1]', '::1'])

let cached: { url: string, transport: Transporter } | undefined

function transportFor(url: string) {
  if (cached?.url === url) return cached.transport
  const host = URL.canParse(url) ? new URL(url).hostname : null
  if (host === null) {
    throw createError({ statusCode: 503, message: 'E-mail is not set up correctly on this server (SMTP_URL is not a valid smtp:// address), so nothing was sent.' })
  }
  const transport = nodemailer.createTransport({
    url,
    // The loopback catcher offers no usable STARTTLS (INTEGRATION.md); a real relay keeps TLS.
    ignoreTLS: LOOPBACK.has(host),
    // A mail server that hangs must not hold a request (and its transaction) for minutes.
    connectionTimeout: 10_000,
    greetingTimeout: 10_000,
    socketTimeout: 20_000,
  })
  cached = { url, transport }
  return transport
}

/**
 * Send one message over SMTP (`SMTP_URL`, from `MAIL_FROM`). Resolves once the server has accepted it.
 * Throws 503 when no mail server is configured or the server refuses or cannot be reached, so the
 * caller's transaction rolls back and nothing claims to have been sent.
 */
export async function sendMail(mail: OutgoingMail): Promise<{ messageId: string }> {
  const url = process.env.SMTP_URL
  if (!url) {
    throw createError({ statusCode: 503, message: 'E-mail is not set up on this server (SMTP_URL), so nothing was sent. Ask the site administrator.' })
  }
  const transport = transportFor(url)
  try {
    const info = await transport.sendMail({
      from: process.env.MAIL_FROM || DEFAULT_MAIL_FROM,
      to: mail.to,
      subject: mail.subject,
      text: mail.text,
      html: mail.html,
      attachments: mail.attachments?.map(a => ({ filename: a.filename, content: a.content, contentType: a.contentType })),
    })
    return { messageId: info.messageId }
  }
  catch (error) {
    const reason = error as { code?: string, responseCode?: number, message?: string }
    console.error('[mail] sending failed:', reason.code ?? '', reason.responseCode ?? '', reason.message)
    throw createError({
      statusCode: 503,
      message: reason.responseCode
        ? `The mail server refused the message (${reason.responseCode}), so nothing was sent. Try again in a few minutes.`
        : 'The mail server could not be reached, so nothing was sent. Try again in a few minutes.',
    })
  }
}
