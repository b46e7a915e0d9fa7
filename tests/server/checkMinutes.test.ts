/**
 * POST /api/minutes/check: public, multipart (`file`), 20 MB at most, PDFs only (by content).
 * The files are signed here with the server's own key (COUNTERPOISE_SIGNING_*, which npm test gives
 * the server and these tests alike), so the server must find them valid and its own.
 */
import { createHash } from 'node:crypto'
import { beforeAll, describe, expect, inject, it } from 'vitest'
import { signPdf } from '../../server/utils/pdfSigning'
import { startBuiltServer } from '../support/server'
import { PNG_BYTES, offsetInSignedStream, sampleMinutesPdf, withFlippedByte } from '../fixtures/minutes/sampleMinutes'

const baseUrl = inject('baseUrl')
const TWENTY_MB = 20 * 1024 * 1024

/** POST the check as a browser's FormData would, with no session cookie. */
async function check(bytes: Buffer, name = 'minutes.pdf', field = 'file', base = baseUrl) {
  const form = new FormData()
  form.set(field, new Blob([new Uint8Array(bytes)]), name)
  const answer = await fetch(`${base}/api/minutes/check`, { method: 'POST', body: form, headers: { accept: 'application/json' } })
  const text = await answer.text()
  let body: any = text
  try {
    body = JSON.parse(text)
  }
  catch { /* not JSON */ }
  return { status: answer.status, body, headers: answer.headers }
}

let unsigned: Buffer
let signed: Buffer

beforeAll(async () => {
  if (!process.env.COUNTERPOISE_SIGNING_P12) {
    throw new Error('COUNTERPOISE_SIGNING_P12 is not set: run the server tests through `npm test`, which gives the server and the tests the signing key (scripts/lib/signingCert.mjs).')
  }
  unsigned = await sampleMinutesPdf('Minutes of the check room')
  signed = await signPdf(unsigned, { signerName: 'Check Secretary', reason: 'Minutes of the check room', location: 'Counterpoise', contactInfo: 'secretary@example.org' })
}, 60_000)

describe('checking minutes (no sign-in)', () => {
  it('a signed file: 200, valid, signed by the name in the signature, whole file, this server\'s certificate, its SHA-256, no record', async () => {
    const answer = await check(signed, 'Minutes — check room.pdf')
    expect(answer.status).toBe(200)
    expect(answer.body).toMatchObject({
      filename: 'Minutes — check room.pdf',
      size: signed.length,
      signed: true,
      valid: true,
      coversWholeFile: true,
      trustedByThisServer: true,
      signer: { commonName: expect.any(String), serial: expect.stringMatching(/^[0-9A-F]+$/) },
      // Who signed, from the signature dictionary's /Name (the certificate names the server's signer).
      signerName: 'Check Secretary',
      sha256: createHash('sha256').update(signed).digest('hex'),
      // Nothing was recorded for this freshly signed file, whatever the records table holds.
      record: null,
    })
    expect(Date.parse(answer.body.signedAt)).toBeGreaterThan(Date.now() - 5 * 60_000)
    expect(answer.body.reason).toBeUndefined()
  })

  it('a name outside ASCII (written as UTF-16BE) and with markup comes back as the same plain text', async () => {
    const name = 'Siân <em>Ó Briain</em> 書記'
    const file = await signPdf(unsigned, { signerName: name, reason: 'Minutes of the check room', location: 'Counterpoise', contactInfo: '' })
    expect(file.toString('latin1')).toContain('/Name (\\376\\377')
    const answer = await check(file)
    expect(answer.body).toMatchObject({ valid: true, signerName: name })
  })

  it('the same file with one signed byte changed: 200, signed but not valid, with the reason', async () => {
    const answer = await check(withFlippedByte(signed, offsetInSignedStream(signed)))
    expect(answer.status).toBe(200)
    // The name is still read, as what the signature claims.
    expect(answer.body).toMatchObject({ signed: true, valid: false, signerName: 'Check Secretary' })
    expect(answer.body.reason).toMatch(/Digest mismatch/)
  })

  it('an unsigned PDF: 200, not signed', async () => {
    const answer = await check(unsigned)
    expect(answer.status).toBe(200)
    expect(answer.body).toMatchObject({ signed: false, valid: false, record: null })
    expect(answer.body).not.toHaveProperty('signerName')
    expect(answer.body.reason).toMatch(/No signature found/)
  })

  it.each([
    ['a PNG named .pdf', PNG_BYTES],
    ['an empty file', Buffer.alloc(0)],
    ['text', Buffer.from('These are the minutes, honestly.\n')],
  ])('%s: 415 "This is not a PDF file"', async (_name, bytes) => {
    const answer = await check(bytes, 'minutes.pdf')
    expect(answer.status).toBe(415)
    expect(answer.body.message).toMatch(/^This is not a PDF file/)
  })

  it('a file over 20 MB: 413 with the limit, even when it starts like a PDF', async () => {
    const big = Buffer.alloc(TWENTY_MB + 1024, 0x20)
    big.write('%PDF-1.7\n')
    const answer = await check(big, 'huge.pdf')
    expect(answer.status).toBe(413)
    expect(answer.body.message).toMatch(/largest file this check accepts is 20 MB/)
  }, 60_000)

  it('a file just under 20 MB is read and checked', async () => {
    const padded = Buffer.concat([signed, Buffer.alloc(TWENTY_MB - signed.length - 16, 0x20)])
    const answer = await check(padded)
    expect(answer.status).toBe(200)
    expect(answer.body).toMatchObject({ signed: true, valid: false, coversWholeFile: false })
  }, 60_000)

  it('no file part: 400 saying what is missing', async () => {
    const answer = await check(signed, 'minutes.pdf', 'document')
    expect(answer.status).toBe(400)
    expect(answer.body.message).toMatch(/"file"/)
  })

  it('not multipart: 400', async () => {
    const answer = await fetch(`${baseUrl}/api/minutes/check`, { method: 'POST', body: JSON.stringify({ file: 'x' }), headers: { 'content-type': 'application/json', 'accept': 'application/json' } })
    expect(answer.status).toBe(400)
    expect((await answer.json()).message).toMatch(/multipart\/form-data/)
  })
})

describe('checking minutes, limited per address', () => {
  it('answers 429 with Retry-After after COUNTERPOISE_CHECK_LIMIT checks from one address; another address carries on', async () => {
    const limited = await startBuiltServer({ ...process.env, BASE_URL: '', COUNTERPOISE_CHECK_LIMIT: '3' })
    try {
      const v4 = limited.baseUrl
      const v6 = v4.replace('127.0.0.1', '[::1]')
      for (let i = 0; i < 3; i++) expect((await check(unsigned, 'minutes.pdf', 'file', v4)).status).toBe(200)
      const refused = await check(unsigned, 'minutes.pdf', 'file', v4)
      expect(refused.status).toBe(429)
      expect(refused.body.message).toMatch(/Too many minutes checked/)
      expect(Number(refused.headers.get('retry-after'))).toBeGreaterThan(500)
      expect(Number(refused.headers.get('retry-after'))).toBeLessThanOrEqual(600)
      // Even a malformed request counts, and is refused before its body is read.
      expect((await check(Buffer.from('not a pdf'), 'x.txt', 'file', v4)).status).toBe(429)
      expect((await check(unsigned, 'minutes.pdf', 'file', v6)).status).toBe(200)
    }
    finally {
      await limited.stop()
    }
  }, 60_000)
})
