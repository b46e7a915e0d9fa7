/**
 * Signing minutes and checking the signature. The outside verifier is Debian's `pdfsig` (poppler-utils,
 * NSS underneath); trust is checked with an NSS database made by `certutil` (libnss3-tools) from the
 * development authority. pdfsig exits 0 even for a broken signature, so its output is what is read.
 */
import { execFileSync, spawnSync } from 'node:child_process'
import { mkdirSync, mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { pdflibAddPlaceholder } from '@signpdf/placeholder-pdf-lib'
import { SignPdf, Signer } from '@signpdf/signpdf'
import { P12Signer } from '@signpdf/signer-p12'
import { PDFDict, PDFDocument, PDFHexString, PDFName, PDFString } from 'pdf-lib'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
// @ts-expect-error plain ESM script without types
import { ensureDevSigningCert as ensureDevSigningCertUntyped } from '../../../scripts/lib/signingCert.mjs'
import { inspectSignedPdf, looksLikePdf, pdfLiteralText, serialHex, signPdf } from '../../../server/utils/pdfSigning'
import {
  PNG_BYTES, byteRangeOf, offsetInSignedStream, sampleMinutesPdf, withChangedSignatureValue, withFlippedByte,
} from '../../fixtures/minutes/sampleMinutes'

const DETAILS = {
  signerName: 'Zoë Ångström (secretary) \\ test',
  reason: 'Minutes of Harbour wall options',
  location: 'Counterpoise',
  contactInfo: 'secretary@example.org',
}
interface SigningKey { p12Path: string, passphrase: string, caCertPath: string }
const ensureDevSigningCert = ensureDevSigningCertUntyped as (options: { dir: string, env: Record<string, string> }) => SigningKey

const ENV_KEYS = ['COUNTERPOISE_SIGNING_P12', 'COUNTERPOISE_SIGNING_PASSPHRASE', 'COUNTERPOISE_SIGNING_CA'] as const

let work: string
let signing: SigningKey
let nssDir: string
let unsigned: Buffer
let signed: Buffer
let signedBetween: [Date, Date]
let savedEnv: Partial<Record<string, string>> = {}

function tool(command: string, args: string[], debianPackage: string): string {
  const run = spawnSync(command, args, { encoding: 'utf8', env: { ...process.env, TZ: 'UTC', LC_ALL: 'C' } })
  if ((run.error as NodeJS.ErrnoException | undefined)?.code === 'ENOENT') {
    throw new Error(`${command} is missing: install it with \`apt-get install -y ${debianPackage}\` (the signature tests need an outside verifier)`)
  }
  if (run.error) throw run.error
  return `${run.stdout}${run.stderr}`
}

/** pdfsig's report on a file (written to the work folder); with the NSS database when `trusted`. */
function pdfsig(pdf: Buffer, name: string, { trusted = false } = {}): string {
  const file = join(work, name)
  writeFileSync(file, pdf)
  return tool('pdfsig', [...(trusted ? ['-nssdir', `sql:${nssDir}`] : []), file], 'poppler-utils')
}

beforeAll(async () => {
  savedEnv = Object.fromEntries(ENV_KEYS.map(key => [key, process.env[key]]))
  work = mkdtempSync(join(tmpdir(), 'counterpoise-signing-test-'))
  // `env: {}`: always a certificate made here, whatever the surrounding environment configures.
  signing = ensureDevSigningCert({ dir: join(work, 'signing'), env: {} })
  process.env.COUNTERPOISE_SIGNING_P12 = signing.p12Path
  process.env.COUNTERPOISE_SIGNING_PASSPHRASE = signing.passphrase
  process.env.COUNTERPOISE_SIGNING_CA = signing.caCertPath

  nssDir = join(work, 'nss')
  mkdirSync(nssDir)
  tool('certutil', ['-N', '-d', `sql:${nssDir}`, '--empty-password'], 'libnss3-tools')
  tool('certutil', ['-A', '-d', `sql:${nssDir}`, '-n', 'Counterpoise development CA', '-t', 'C,C,C', '-i', signing.caCertPath], 'libnss3-tools')

  unsigned = await sampleMinutesPdf()
  const before = new Date()
  signed = await signPdf(unsigned, DETAILS)
  signedBetween = [before, new Date()]
}, 120_000)

afterAll(() => {
  for (const key of ENV_KEYS) {
    if (savedEnv[key] === undefined) Reflect.deleteProperty(process.env, key)
    else process.env[key] = savedEnv[key]
  }
  if (work) rmSync(work, { recursive: true, force: true })
})

/** Signs the byte range with the openssl command (a CMS of its own making): a signer other than ours. */
class OpensslSigner extends Signer {
  constructor(private readonly files: { key: string, cert: string, chain: string, keyid: boolean }) {
    super()
  }

  override async sign(content: Buffer): Promise<Buffer> {
    const range = join(work, 'range.bin')
    writeFileSync(range, content)
    return execFileSync('openssl', ['cms', '-sign', '-binary', ...(this.files.keyid ? ['-keyid'] : []), '-md', 'sha256', '-signer', this.files.cert, '-inkey', this.files.key,
      '-certfile', this.files.chain, '-outform', 'DER', '-in', range])
  }
}

/** pdfsig's "Signing Time" line for an instant, as it prints it with TZ=UTC. */
function pdfsigTime(date: Date): string {
  const month = date.toLocaleString('en-GB', { month: 'short', timeZone: 'UTC' }).slice(0, 3)
  const two = (n: number) => String(n).padStart(2, '0')
  return `${month} ${two(date.getUTCDate())} ${date.getUTCFullYear()} ${two(date.getUTCHours())}:${two(date.getUTCMinutes())}:${two(date.getUTCSeconds())}`
}

describe('the development signing certificate', () => {
  it('is made once and reused: same bundle, same passphrase, owner-only files', () => {
    const again = ensureDevSigningCert({ dir: join(work, 'signing'), env: {} })
    expect(again).toEqual(signing)
    for (const file of [signing.p12Path, join(work, 'signing/passphrase'), join(work, 'signing/ca.key')]) {
      expect((statSync(file).mode & 0o777).toString(8), file).toBe('600')
    }
    expect(readFileSync(join(work, 'signing/passphrase'), 'utf8').trim()).toBe(signing.passphrase)
    expect(signing.passphrase.length).toBeGreaterThanOrEqual(24)
  })

  it('names the signer, may sign but not issue, and chains to the development authority (openssl)', () => {
    const text = execFileSync('openssl', ['pkcs12', '-in', signing.p12Path, '-passin', `pass:${signing.passphrase}`, '-nokeys', '-clcerts'], { encoding: 'utf8' })
    const cert = join(work, 'signer-from-p12.pem')
    writeFileSync(cert, text)
    const described = execFileSync('openssl', ['x509', '-in', cert, '-noout', '-subject', '-issuer', '-ext', 'keyUsage,basicConstraints', '-dates'], { encoding: 'utf8' })
    expect(described).toMatch(/subject=.*CN = Counterpoise development signer/)
    expect(described).toMatch(/issuer=.*CN = Counterpoise development CA/)
    expect(described).toMatch(/Digital Signature, Non Repudiation/)
    expect(described).toMatch(/CA:FALSE/)
    expect(execFileSync('openssl', ['verify', '-CAfile', signing.caCertPath, cert], { encoding: 'utf8' })).toMatch(/: OK/)
    const notAfter = new Date(/notAfter=(.*)/.exec(described)![1]!)
    const days = (notAfter.getTime() - Date.now()) / 86_400_000
    expect(days).toBeGreaterThan(365)
    expect(days).toBeLessThan(3 * 365)
  })

  it('returns a configured key as it is, generating nothing', () => {
    const dir = join(work, 'not-made')
    const configured = ensureDevSigningCert({ dir, env: { COUNTERPOISE_SIGNING_P12: '/keys/minutes.p12', COUNTERPOISE_SIGNING_PASSPHRASE: 'secret', COUNTERPOISE_SIGNING_CA: '/keys/ca.crt' } })
    expect(configured).toEqual({ p12Path: '/keys/minutes.p12', passphrase: 'secret', caCertPath: '/keys/ca.crt' })
    expect(() => statSync(dir)).toThrow()
  })
})

describe('signPdf, checked by pdfsig (poppler)', () => {
  it('gives a signature pdfsig calls valid, covering the whole document, with the signer and the time', () => {
    const report = pdfsig(signed, 'signed.pdf')
    expect(report).toContain('Signature Validation: Signature is Valid.')
    expect(report).toContain('Total document signed')
    expect(report).toContain('Signer Certificate Common Name: Counterpoise development signer')
    expect(report).toContain('Signature Type: adbe.pkcs7.detached')
    expect(report).toContain('Signing Hash Algorithm: SHA-256')
    const time = /Signing Time: (.+)/.exec(report)?.[1]?.trim()
    const [before, after] = signedBetween
    const candidates = new Set<string>()
    for (let t = Math.floor(before.getTime() / 1000); t <= Math.ceil(after.getTime() / 1000); t++) candidates.add(pdfsigTime(new Date(t * 1000)))
    expect(candidates).toContain(time)
  })

  it('is trusted once the development authority is in the NSS database, and not before', () => {
    expect(pdfsig(signed, 'signed-untrusted.pdf')).not.toContain('Certificate is Trusted')
    expect(pdfsig(signed, 'signed-trusted.pdf', { trusted: true })).toContain('Certificate Validation: Certificate is Trusted.')
  })

  it('writes the signer name, reason, location, contact and signing time into the signature dictionary', async () => {
    const doc = await PDFDocument.load(signed)
    const field = doc.getForm().getFields().find(f => f.acroField.dict.lookup(PDFName.of('FT')) === PDFName.of('Sig'))
    expect(field).toBeDefined()
    const signature = field!.acroField.dict.lookup(PDFName.of('V'), PDFDict)
    const text = (key: string) => signature.lookup(PDFName.of(key), PDFString, PDFHexString).decodeText()
    expect(text('Name')).toBe(DETAILS.signerName)
    expect(text('Reason')).toBe(DETAILS.reason)
    expect(text('Location')).toBe(DETAILS.location)
    expect(text('ContactInfo')).toBe(DETAILS.contactInfo)
    const when = signature.lookup(PDFName.of('M'), PDFString).decodeDate()
    const inspection = await inspectSignedPdf(signed)
    expect(when.toISOString()).toBe(inspection.signedAt)
    // The check reads the same name as pdf-lib's document parser does (UTF-16BE here: "ë", "Å").
    expect(inspection.signerName).toBe(text('Name'))
  })

  it('signs again with a new signer each time (a P12Signer signs once)', async () => {
    const second = await signPdf(await sampleMinutesPdf('Second minutes'), DETAILS)
    expect(pdfsig(second, 'second.pdf')).toContain('Signature is Valid.')
    expect((await inspectSignedPdf(second)).valid).toBe(true)
  })

  it('answers 503 with a clear message when no signing key is configured', async () => {
    const p12 = process.env.COUNTERPOISE_SIGNING_P12
    delete process.env.COUNTERPOISE_SIGNING_P12
    try {
      await expect(signPdf(unsigned, DETAILS)).rejects.toMatchObject({ statusCode: 503, message: expect.stringMatching(/no signing key is configured/) })
    }
    finally {
      process.env.COUNTERPOISE_SIGNING_P12 = p12
    }
  })

  it('answers 503 when the passphrase does not open the key', async () => {
    process.env.COUNTERPOISE_SIGNING_PASSPHRASE = 'not-the-passphrase'
    try {
      await expect(signPdf(unsigned, DETAILS)).rejects.toMatchObject({ statusCode: 503, message: expect.stringMatching(/cannot be opened/) })
    }
    finally {
      process.env.COUNTERPOISE_SIGNING_PASSPHRASE = signing.passphrase
    }
  })
})

// A random serial whose first byte is 0x80 or more is stored in DER after a 00 sign byte; the
// comparison with openssl below failed whenever the development certificate drew such a serial.
describe('serialHex', () => {
  it.each([
    [[0x00, 0xDC, 0xBA, 0x7F], 'DCBA7F'],
    [[0x5A, 0x01], '5A01'],
    [[0x01, 0x00], '0100'],
    [[0x00], '00'],
  ])('%j reads as %s, as openssl prints it', (bytes, hex) => {
    expect(serialHex(new Uint8Array(bytes))).toBe(hex)
  })
})

describe('inspectSignedPdf', () => {
  /** The sample minutes signed by the openssl command, naming the signer by key identifier or by issuer and serial. */
  async function signedByOpenssl(keyid: boolean) {
    const key = join(work, 'signer-key.pem')
    const cert = join(work, 'signer-cert.pem')
    execFileSync('openssl', ['pkcs12', '-in', signing.p12Path, '-passin', `pass:${signing.passphrase}`, '-nocerts', '-nodes', '-out', key])
    execFileSync('openssl', ['pkcs12', '-in', signing.p12Path, '-passin', `pass:${signing.passphrase}`, '-clcerts', '-nokeys', '-out', cert])
    const doc = await PDFDocument.load(unsigned)
    pdflibAddPlaceholder({ pdfDoc: doc, name: 'OpenSSL', reason: 'Interoperability', location: 'Tests', contactInfo: 'none', signatureLength: 8192 })
    const prepared = Buffer.from(await doc.save({ useObjectStreams: false }))
    const pdf = await new SignPdf().sign(prepared, new OpensslSigner({ key, cert, chain: signing.caCertPath, keyid }))
    // How the CMS names its signer, as OpenSSL reads it back.
    const [, holeStart, holeEnd] = byteRangeOf(pdf)
    const cms = join(work, 'openssl.cms')
    writeFileSync(cms, Buffer.from(pdf.subarray(holeStart + 1, holeEnd - 1).toString('latin1').replace(/(00)+$/, ''), 'hex'))
    const printed = execFileSync('openssl', ['cms', '-cmsout', '-print', '-inform', 'DER', '-in', cms], { encoding: 'utf8' })
    return { pdf, printed }
  }

  it('accepts a signature made by OpenSSL rather than our signer, as pdfsig does', async () => {
    const { pdf, printed } = await signedByOpenssl(false)
    expect(printed).toMatch(/d\.issuerAndSerialNumber/)
    expect(pdfsig(pdf, 'openssl.pdf')).toContain('Signature is Valid.')
    const inspection = await inspectSignedPdf(pdf)
    expect(inspection).toMatchObject({ signed: true, valid: true, coversWholeFile: true, trustedByThisServer: true, signer: { commonName: 'Counterpoise development signer' }, signerName: 'OpenSSL' })
    expect(inspection.signedAt).toEqual(expect.any(String))
    const changed = withFlippedByte(pdf, offsetInSignedStream(pdf))
    expect(pdfsig(changed, 'openssl-changed.pdf')).toContain('Digest Mismatch')
    expect((await inspectSignedPdf(changed)).valid).toBe(false)
  })

  it('finds the signer named by subject key identifier (RFC 5652 allows it; poppler 22.12 cannot, so no pdfsig here)', async () => {
    const { pdf, printed } = await signedByOpenssl(true)
    expect(printed).toMatch(/d\.subjectKeyIdentifier/)
    const inspection = await inspectSignedPdf(pdf)
    expect(inspection).toMatchObject({ valid: true, signer: { commonName: 'Counterpoise development signer' } })
    expect((await inspectSignedPdf(withChangedSignatureValue(pdf))).valid).toBe(false)
  })

  it('finds the signed file valid: whole file, signer, time, hash, issued by this server', async () => {
    const inspection = await inspectSignedPdf(signed)
    expect(inspection).toMatchObject({
      signed: true,
      valid: true,
      coversWholeFile: true,
      trustedByThisServer: true,
      signer: { commonName: 'Counterpoise development signer', organisation: 'Counterpoise (development)' },
    })
    expect(inspection.reason).toBeUndefined()
    expect(inspection.sha256).toBe(execFileSync('sha256sum', [join(work, 'signed.pdf')], { encoding: 'utf8' }).split(' ')[0])
    const serial = execFileSync('openssl', ['pkcs12', '-in', signing.p12Path, '-passin', `pass:${signing.passphrase}`, '-nokeys', '-clcerts'], { encoding: 'utf8' })
    const openssl = execFileSync('openssl', ['x509', '-noout', '-serial'], { input: serial, encoding: 'utf8' })
    expect(`serial=${inspection.signer!.serial}`).toBe(openssl.trim())
    const at = new Date(inspection.signedAt!).getTime()
    expect(at).toBeGreaterThanOrEqual(Math.floor(signedBetween[0].getTime() / 1000) * 1000)
    expect(at).toBeLessThanOrEqual(signedBetween[1].getTime())
  })

  it('is not trusted by a server whose authority is another one', async () => {
    const other = ensureDevSigningCert({ dir: join(work, 'other-authority'), env: {} })
    process.env.COUNTERPOISE_SIGNING_CA = other.caCertPath
    try {
      const inspection = await inspectSignedPdf(signed)
      expect(inspection.valid).toBe(true)
      expect(inspection.trustedByThisServer).toBe(false)
    }
    finally {
      process.env.COUNTERPOISE_SIGNING_CA = signing.caCertPath
    }
  }, 60_000)

  it('one byte of the signed content changed: pdfsig reports a digest mismatch, and so does the check', async () => {
    const offset = offsetInSignedStream(signed)
    const [, holeStart, holeEnd] = byteRangeOf(signed)
    expect(offset < holeStart || offset >= holeEnd).toBe(true)
    const tampered = withFlippedByte(signed, offset)
    const report = pdfsig(tampered, 'tampered-content.pdf')
    expect(report).toContain('Digest Mismatch')
    expect(report).not.toContain('Signature is Valid')
    const inspection = await inspectSignedPdf(tampered)
    expect(inspection).toMatchObject({ signed: true, valid: false, coversWholeFile: true })
    expect(inspection.reason).toMatch(/Digest mismatch/)
  })

  it('one byte after the signature changed (the reason text): invalid for pdfsig and the check', async () => {
    const at = signed.lastIndexOf('Harbour wall', undefined, 'latin1')
    const [, , holeEnd] = byteRangeOf(signed)
    expect(at).toBeGreaterThan(holeEnd)
    const tampered = withFlippedByte(signed, at)
    expect(pdfsig(tampered, 'tampered-reason.pdf')).toContain('Digest Mismatch')
    expect((await inspectSignedPdf(tampered)).valid).toBe(false)
  })

  it('one digit of the signature value changed: invalid for pdfsig and the check', async () => {
    const tampered = withChangedSignatureValue(signed)
    const report = pdfsig(tampered, 'tampered-signature.pdf')
    expect(report).not.toContain('Signature is Valid')
    expect(report).toMatch(/Signature Validation: (Signature is Invalid|Digest Mismatch)/)
    const inspection = await inspectSignedPdf(tampered)
    expect(inspection).toMatchObject({ signed: true, valid: false })
    expect(inspection.reason).toMatch(/signature does not match/)
  })

  /** A copy with the byte at `offset` set to `value`. */
  const withByte = (pdf: Buffer, offset: number, value: number) => {
    const copy = Buffer.from(pdf)
    copy[offset] = value
    return copy
  }

  it.each([
    ['a non-hexadecimal character in the signature', (pdf: Buffer) => withByte(pdf, byteRangeOf(pdf)[1] + 41, 0x47), /not hexadecimal/],
    ['data written into the padding after the signature', (pdf: Buffer) => withByte(pdf, byteRangeOf(pdf)[2] - 3, 0x37), /holds data after the signature/],
    ['bytes added after signing', (pdf: Buffer) => Buffer.concat([pdf, Buffer.from('\n% added later\n')]), /bytes were added to the file after signing/],
  ])('%s: signed but not valid', async (_name, change, reason) => {
    const inspection = await inspectSignedPdf(change(signed))
    expect(inspection.signed).toBe(true)
    expect(inspection.valid).toBe(false)
    expect(inspection.reason).toMatch(reason)
  })

  it('bytes added after signing: pdfsig too says the whole document is not signed', async () => {
    const extended = Buffer.concat([signed, Buffer.from('\n% added later\n')])
    expect(pdfsig(extended, 'extended.pdf')).toContain('Not total document signed')
    expect((await inspectSignedPdf(extended)).coversWholeFile).toBe(false)
  })

  /**
   * The sample minutes signed with the development key, its signature dictionary naming the signer
   * `name` (a literal string's contents), and optionally `edit`ed as text before signing (so the
   * signature stays valid); an edit keeps the length, so the cross-reference table stays right.
   */
  async function signedWithDictionary(name: string, edit: (text: string) => string = t => t) {
    const doc = await PDFDocument.load(unsigned)
    pdflibAddPlaceholder({ pdfDoc: doc, name, reason: 'Names', location: 'Tests', contactInfo: 'none', signatureLength: 8192, appName: 'Counterpoise' })
    const saved = Buffer.from(await doc.save({ useObjectStreams: false })).toString('latin1')
    const edited = edit(saved)
    expect(edited.length).toBe(saved.length)
    const pdf = await new SignPdf().sign(Buffer.from(edited, 'latin1'), new P12Signer(readFileSync(signing.p12Path), { passphrase: signing.passphrase }))
    const inspection = await inspectSignedPdf(pdf)
    expect(inspection.valid, inspection.reason).toBe(true)
    return inspection
  }

  it.each([
    // PDFDocEncoding (ISO 32000-1, Annex D.2, recalled from memory and as pdf-lib's table has it): 0xE9 é, 0xFA ú, 0x80 bullet, 0xA0 euro sign.
    ['PDFDocEncoding', 'Jos\\351 \\200 \\240 5', 'José • € 5'],
    // UTF-16BE with its byte-order mark, as our signer writes non-ASCII names: "Zoë" is FE FF 00 5A 00 6F 00 EB.
    ['UTF-16BE', '\\376\\377\\000Z\\000o\\000\\353', 'Zoë'],
    ['escaped brackets and backslash', 'A \\(b\\) \\\\ c', 'A (b) \\ c'],
    ['balanced brackets left unescaped', 'Clerk (acting)', 'Clerk (acting)'],
    ['markup, kept as text, and a control character, dropped', '<b>Ana</b>\\007 L\\372cia', '<b>Ana</b> Lúcia'],
  ])('reads /Name written in %s', async (_how, literal, expected) => {
    expect((await signedWithDictionary(literal)).signerName).toBe(expected)
  })

  const PLACEHOLDER_NAME = 'x'.repeat(60)

  it('reads /Name written as a hexadecimal string (UTF-16BE, outside the Basic Multilingual Plane too)', async () => {
    const name = 'Łucja 書記 𝄞'
    // pdf-lib writes the hexadecimal UTF-16BE form with its byte-order mark; the spaces after it are ignored (ISO 32000-1, 7.3.4.3).
    const hex = PDFHexString.fromText(name).toString()
    const inspection = await signedWithDictionary(PLACEHOLDER_NAME, text => text.replace(`/Name (${PLACEHOLDER_NAME})`, `/Name ${hex.slice(0, -1).padEnd(PLACEHOLDER_NAME.length + 1)}>`))
    expect(inspection.signerName).toBe(name)
  })

  it('without its own /Name the signature names no one (a /Name inside /Prop_Build is not it)', async () => {
    const inspection = await signedWithDictionary(PLACEHOLDER_NAME, (text) => {
      expect(text).toMatch(/\/Prop_Build[\s\S]*\/Name \/Counterpoise/)
      // The names inside /Prop_Build become text strings, which the check must not take for the signer's.
      return text.replace(`/Name (${PLACEHOLDER_NAME})`, ' '.repeat(`/Name (${PLACEHOLDER_NAME})`.length))
        .replace(/\/Name \/\S+/g, name => `/Name (${'n'.repeat(name.length - 8)})`)
    })
    expect(inspection.signerName).toBeUndefined()
  })

  it('an unsigned PDF: no signature found (pdfsig agrees)', async () => {
    expect(pdfsig(unsigned, 'unsigned.pdf')).toMatch(/does not contain any signatures/)
    const inspection = await inspectSignedPdf(unsigned)
    expect(inspection).toMatchObject({ signed: false, valid: false, coversWholeFile: false, trustedByThisServer: false })
    expect(inspection.reason).toMatch(/No signature found/)
    expect(inspection.sha256).toMatch(/^[0-9a-f]{64}$/)
  })

  it('a PNG: not signed, with the reason that it is not a PDF', async () => {
    const inspection = await inspectSignedPdf(PNG_BYTES)
    expect(inspection).toMatchObject({ signed: false, valid: false })
    expect(inspection.reason).toMatch(/not a PDF file/)
    expect(looksLikePdf(PNG_BYTES)).toBe(false)
    expect(looksLikePdf(signed)).toBe(true)
  })

  it.each([
    ['an empty file', () => Buffer.alloc(0)],
    ['only a header', () => Buffer.from('%PDF-1.7\n')],
    ['the first half of the signed file', () => signed.subarray(0, Math.floor(signed.length / 2))],
    ['the signed file without its first kilobyte', () => signed.subarray(1024)],
    ['a byte range beyond the end of the file', () => Buffer.from('%PDF-1.7\n1 0 obj << /Type /Sig /ByteRange [0 10 99999 5] /Contents <00> >> endobj\n')],
    ['a byte range whose hole is not the contents', () => Buffer.from('%PDF-1.7\n1 0 obj << /Type /Sig /ByteRange [0 12 20 40] /Contents <3000> >> endobj\n%%EOF\n')],
    ['contents that are not CMS', () => fillByteRange('%PDF-1.7\n1 0 obj << /Type /Sig /ByteRange [0 AAAA BBBB CCCC] /Contents <deadbeef> >> endobj\n%%EOF\n')],
  ])('never throws for %s', async (_name, make) => {
    const inspection = await inspectSignedPdf(make())
    expect(inspection.valid).toBe(false)
    expect(inspection.reason).toEqual(expect.any(String))
  })
})

describe('pdfLiteralText', () => {
  it.each([
    ['Plain name', 'Plain name'],
    ['a (b) \\ c', 'a \\050b\\051 \\134 c'],
    ['tab\there', 'tab\\011here'],
    ['Zoë', '\\376\\377\\000Z\\000o\\000\\353'],
  ])('%j → %j', (text, literal) => {
    expect(pdfLiteralText(text)).toBe(literal)
  })
})

/** A byte range placeholder (AAAA BBBB CCCC) filled so the hole is exactly the /Contents string. */
function fillByteRange(text: string): Buffer {
  const holeStart = text.indexOf('<deadbeef>')
  const holeEnd = holeStart + '<deadbeef>'.length
  const filled = text.replace('AAAA', String(holeStart).padStart(4, '0')).replace('BBBB', String(holeEnd).padStart(4, '0')).replace('CCCC', String(text.length - holeEnd).padStart(4, '0'))
  return Buffer.from(filled)
}
