/**
 * Signing minutes as PDF with a standard embedded signature (adbe.pkcs7.detached: a CMS SignedData
 * over every byte of the file but the signature itself), and checking such a signature again.
 *
 * The signing key is a PKCS#12 bundle named by COUNTERPOISE_SIGNING_P12 with its passphrase in
 * COUNTERPOISE_SIGNING_PASSPHRASE; COUNTERPOISE_SIGNING_CA names the certificate of the authority
 * that issued it (scripts/lib/signingCert.mjs makes a development pair when none is configured).
 *
 * What `inspectSignedPdf` checks, in order, for the last signature in the file:
 * 1. the byte range is [0, a, b, c] with its hole [a, b) holding exactly the /Contents hex string;
 * 2. whether the range reaches the end of the file (nothing added after signing);
 * 3. the CMS SignedData in the hole: its messageDigest attribute against the hash of the range;
 * 4. the signer's signature over the signed attributes, with the certificate the CMS names;
 * 5. whether this server's authority issued that certificate (trust, reported apart from validity).
 * A signature is `valid` only when 1–4 hold and it covers the whole file.
 */
import { createHash, X509Certificate } from 'node:crypto'
import { readFile } from 'node:fs/promises'
import { pdflibAddPlaceholder } from '@signpdf/placeholder-pdf-lib'
import { SignPdf } from '@signpdf/signpdf'
import { P12Signer } from '@signpdf/signer-p12'
import * as asn1js from 'asn1js'
import { createError, getRequestHeader, readMultipartFormData, type H3Event } from 'h3'
import { PDFDocument, PDFHexString, PDFString, hasUtf16BOM, pdfDocEncodingDecode, utf16Decode } from 'pdf-lib'
import { Certificate, ContentInfo, IssuerAndSerialNumber, SignedData, type SignerInfo } from 'pkijs'

export interface SignatureDetails {
  signerName: string
  reason: string
  location: string
  contactInfo: string
}

export interface SignerIdentity {
  commonName: string
  organisation?: string
  /** The certificate's serial number in upper-case hexadecimal. */
  serial: string
}

export interface PdfInspection {
  /** A filled signature (a /ByteRange with numbers) was found. */
  signed: boolean
  /** The signature is intact, verifies with its certificate and covers the whole file. */
  valid: boolean
  /** Why the file is not signed or the signature not valid, in words for the page. */
  reason?: string
  signer?: SignerIdentity
  /**
   * The signer's name as the signature dictionary gives it (/Name), decoded from the PDF text
   * string (UTF-16BE with a byte-order mark, UTF-8 with one, or PDFDocEncoding) without control
   * characters. Plain text for the page, never markup. Absent when the dictionary names no one.
   */
  signerName?: string
  /** ISO 8601; from the signed signingTime attribute, else the signature dictionary's /M. */
  signedAt?: string
  /** The signed range is the whole file except the signature itself. */
  coversWholeFile: boolean
  /** SHA-256 of the whole file as uploaded, in lower-case hexadecimal. */
  sha256: string
  /**
   * The certificate the signature names is this server's authority or was issued by it. It says
   * who the certificate belongs to, not that the signature is valid: read it with `valid`.
   */
  trustedByThisServer: boolean
}

/** The largest PDF the public check accepts (20 MB); minutes are a few hundred kilobytes. */
export const MAX_MINUTES_CHECK_BYTES = 20 * 1024 * 1024
/** Room for the multipart envelope around the file (boundaries, part headers, a long file name). */
const MULTIPART_ALLOWANCE = 64 * 1024

/** Room for the CMS in the file (bytes): a signer and an authority certificate with RSA-3072 keys take about 3 kB. */
const SIGNATURE_BYTES = 8192
/** A PDF's header may follow some bytes of junk, which readers accept (ISO 32000: within the first 1024). */
const HEADER_WINDOW = 1024

const OID = {
  signedData: '1.2.840.113549.1.7.2',
  messageDigest: '1.2.840.113549.1.9.4',
  signingTime: '1.2.840.113549.1.9.5',
  commonName: '2.5.4.3',
  organisation: '2.5.4.10',
}
const DIGESTS: Record<string, string> = {
  '1.3.14.3.2.26': 'sha1',
  '2.16.840.1.101.3.4.2.1': 'sha256',
  '2.16.840.1.101.3.4.2.2': 'sha384',
  '2.16.840.1.101.3.4.2.3': 'sha512',
}

/** Whether the bytes start (within the first 1024) with a PDF header, `%PDF-`. */
export function looksLikePdf(bytes: Uint8Array): boolean {
  return Buffer.from(bytes.buffer, bytes.byteOffset, Math.min(bytes.length, HEADER_WINDOW)).includes('%PDF-', 0, 'latin1')
}

// ── configuration ──

interface SigningConfig { p12Path: string, passphrase: string }

function signingConfig(): SigningConfig {
  const p12Path = process.env.COUNTERPOISE_SIGNING_P12
  if (!p12Path) {
    throw createError({ statusCode: 503, message: 'Minutes cannot be signed on this server: no signing key is configured (COUNTERPOISE_SIGNING_P12). Ask the administrator to set one, or start the server with npm start, which makes a development key.' })
  }
  return { p12Path, passphrase: process.env.COUNTERPOISE_SIGNING_PASSPHRASE ?? '' }
}

let authority: { path: string, cert: X509Certificate | null } | undefined

/** This server's authority certificate (COUNTERPOISE_SIGNING_CA), read once; null when none is configured or it cannot be read. */
async function authorityCertificate(): Promise<X509Certificate | null> {
  const path = process.env.COUNTERPOISE_SIGNING_CA ?? ''
  if (authority?.path !== path) {
    let cert: X509Certificate | null = null
    if (path) {
      try {
        cert = new X509Certificate(await readFile(path))
      }
      catch (error) {
        console.error(`[minutes] the signing authority certificate ${path} cannot be read: ${(error as Error).message}`)
      }
    }
    authority = { path, cert }
  }
  return authority.cert
}

// ── signing ──

/**
 * A PDF literal string's contents for `text`, escaped for pdf-lib's PDFString.of (which writes its
 * value as it is): ASCII text as itself, anything else as UTF-16BE with a byte-order mark, the
 * form ISO 32000 gives text strings. Backslashes, brackets and control bytes become octal escapes.
 */
export function pdfLiteralText(text: string): string {
  // PDFDocEncoding agrees with ASCII on printable characters and tab, line feed, carriage return.
  const ascii = /^[\t\n\r\x20-\x7E]*$/.test(text)
  let bytes: number[]
  if (ascii) {
    bytes = [...text].map(c => c.charCodeAt(0))
  }
  else {
    bytes = [0xFE, 0xFF]
    for (let i = 0; i < text.length; i++) bytes.push(text.charCodeAt(i) >> 8, text.charCodeAt(i) & 0xFF)
  }
  return bytes.map(b => (b < 0x20 || b > 0x7E || b === 0x5C || b === 0x28 || b === 0x29)
    ? `\\${b.toString(8).padStart(3, '0')}`
    : String.fromCharCode(b)).join('')
}

/**
 * Sign a PDF with the configured key: an invisible signature field whose dictionary names the
 * signer, reason, location, contact and signing time (/M, the same instant as the CMS signingTime
 * attribute). The PDF is rewritten once by pdf-lib (without object streams, so the signature
 * dictionary stays in plain bytes), then signed over everything but the signature.
 * 503 when no key is configured or it cannot be opened.
 */
export async function signPdf(pdf: Buffer, details: SignatureDetails): Promise<Buffer> {
  const { p12Path, passphrase } = signingConfig()
  let p12: Buffer
  try {
    p12 = await readFile(p12Path)
  }
  catch (error) {
    throw createError({ statusCode: 503, message: `Minutes cannot be signed on this server: the signing key ${p12Path} cannot be read (${(error as NodeJS.ErrnoException).code ?? (error as Error).message}).` })
  }
  const signingTime = new Date()
  // Whole seconds: the PDF date and the CMS UTCTime carry no fractions, and both should say the same.
  signingTime.setMilliseconds(0)

  const doc = await PDFDocument.load(pdf, { updateMetadata: false })
  pdflibAddPlaceholder({
    pdfDoc: doc,
    name: pdfLiteralText(details.signerName),
    reason: pdfLiteralText(details.reason),
    location: pdfLiteralText(details.location),
    contactInfo: pdfLiteralText(details.contactInfo),
    signingTime,
    signatureLength: SIGNATURE_BYTES,
    appName: 'Counterpoise',
  })
  const prepared = Buffer.from(await doc.save({ useObjectStreams: false }))
  try {
    // A P12Signer signs once: a new one for every signature.
    return await new SignPdf().sign(prepared, new P12Signer(p12, { passphrase }), signingTime)
  }
  catch (error) {
    const message = (error as Error).message
    if (/mac|password|passphrase|decrypt|pkcs#?12|asn\.?1|private key|certificate/i.test(message)) {
      throw createError({ statusCode: 503, message: `Minutes cannot be signed on this server: the signing key ${p12Path} cannot be opened with the configured passphrase (${message}).` })
    }
    throw error
  }
}

// ── inspection ──

interface SignatureSpot {
  range: [number, number, number, number]
  /** Where the ByteRange array was found (to find the dictionary around it). */
  at: number
}

const BYTE_RANGE = /\/ByteRange\s*\[\s*(\d+)\s+(\d+)\s+(\d+)\s+(\d+)\s*\]/g

/** The filled byte ranges in the file, last (widest) first. */
function findSignatures(text: string): SignatureSpot[] {
  const spots: SignatureSpot[] = []
  for (const match of text.matchAll(BYTE_RANGE)) {
    spots.push({ range: [Number(match[1]), Number(match[2]), Number(match[3]), Number(match[4])], at: match.index })
  }
  return spots.sort((x, y) => (y.range[2] + y.range[3]) - (x.range[2] + x.range[3]) || y.at - x.at)
}

/** The signature dictionary around the byte range: from its `obj` to its `endobj`. */
function signatureDictionary(text: string, at: number): string {
  const start = Math.max(0, text.lastIndexOf(' obj', at))
  const end = text.indexOf('endobj', at)
  return text.slice(start, end === -1 ? at + 20_000 : end)
}

/** Where the literal string opening at `open` (a "(") ends, just after its balancing ")"; -1 when it does not. */
function literalEnd(text: string, open: number): number {
  let depth = 0
  for (let i = open; i < text.length; i++) {
    const c = text[i]
    if (c === '\\') i++
    else if (c === '(') depth++
    else if (c === ')' && --depth === 0) return i + 1
  }
  return -1
}

/** The longest text string the check reads from a signature dictionary (characters). */
const LONGEST_DICTIONARY_TEXT = 4096

/**
 * A text string entry of the signature dictionary itself (`/Key (literal)` or `/Key <hex>`, not
 * one of a dictionary nested in it such as /Prop_Build's), decoded: escapes as pdf-lib's
 * PDFString reads them, then `decodedText`. Strings and nested dictionaries are stepped over while
 * looking for the key, so a value that merely contains "/Name" is not taken for the key.
 */
function dictionaryText(dictionary: string, key: string): string | undefined {
  let depth = 0
  for (let i = 0; i < dictionary.length; i++) {
    const c = dictionary[i]
    if (c === '(') {
      const end = literalEnd(dictionary, i)
      if (end === -1) return undefined
      i = end - 1
    }
    else if (c === '<' && dictionary[i + 1] === '<') {
      depth++
      i++
    }
    else if (c === '>' && dictionary[i + 1] === '>') {
      if (--depth <= 0) return undefined
      i++
    }
    else if (c === '<') {
      const end = dictionary.indexOf('>', i)
      if (end === -1) return undefined
      i = end
    }
    else if (c === '/' && depth === 1 && dictionary.startsWith(key, i + 1) && /[\s()<>[\]{}/%]/.test(dictionary[i + 1 + key.length] ?? ' ')) {
      let at = i + 1 + key.length
      while (/\s/.test(dictionary[at] ?? '')) at++
      if (dictionary[at] === '(') {
        const end = literalEnd(dictionary, at)
        if (end === -1 || end - at > LONGEST_DICTIONARY_TEXT * 4) return undefined
        return decodedText(PDFString.of(dictionary.slice(at + 1, end - 1)).asBytes())
      }
      if (dictionary[at] === '<' && dictionary[at + 1] !== '<') {
        const end = dictionary.indexOf('>', at)
        if (end === -1 || end - at > LONGEST_DICTIONARY_TEXT * 4) return undefined
        return decodedText(PDFHexString.of(dictionary.slice(at + 1, end).replace(/\s+/g, '')).asBytes())
      }
      return undefined
    }
  }
  return undefined
}

/** A PDF text string's bytes as text (ISO 32000-2, 7.9.2.2): UTF-16BE or UTF-8 after their byte-order marks, else PDFDocEncoding. */
function decodedText(bytes: Uint8Array): string {
  if (hasUtf16BOM(bytes)) return utf16Decode(bytes)
  if (bytes[0] === 0xEF && bytes[1] === 0xBB && bytes[2] === 0xBF) return new TextDecoder('utf-8').decode(bytes.subarray(3))
  return pdfDocEncodingDecode(bytes)
}

/** The signature dictionary's /Name as plain text for the page: control characters dropped, spaces squeezed, 200 characters at most. */
function dictionaryName(dictionary: string): string | undefined {
  const name = dictionaryText(dictionary, 'Name')?.replace(/\p{Cc}+/gu, ' ').replace(/\s+/g, ' ').trim().slice(0, 200)
  return name || undefined
}

/** The signature dictionary's /M (PDF date: D:YYYYMMDDHHmmSSOHH'mm') as ISO 8601, when it has one. */
function dictionaryTime(dictionary: string): string | undefined {
  const value = dictionaryText(dictionary, 'M')
  const m = value === undefined ? null : /^D:(\d{4})(\d{2})?(\d{2})?(\d{2})?(\d{2})?(\d{2})?([Zz+-])?(\d{2})?'?(\d{2})?'?$/.exec(value.trim())
  if (!m) return undefined
  const [, year, month = '01', day = '01', hour = '00', minute = '00', second = '00', sign = 'Z', offsetHours = '00', offsetMinutes = '00'] = m
  const zone = sign === 'Z' || sign === 'z' ? 'Z' : `${sign}${offsetHours}:${offsetMinutes}`
  const date = new Date(`${year}-${month}-${day}T${hour}:${minute}:${second}${zone}`)
  return Number.isNaN(date.getTime()) ? undefined : date.toISOString()
}

function nameValue(cert: Certificate, type: string): string | undefined {
  const found = cert.subject.typesAndValues.find(tv => tv.type === type)
  const value = (found?.value.valueBlock as { value?: unknown } | undefined)?.value
  return typeof value === 'string' ? value : undefined
}

/**
 * A serial number as `openssl x509 -serial` prints it: the integer in upper-case hexadecimal. DER
 * stores a positive integer whose first byte is 0x80 or more with a 00 byte before it (the sign);
 * that byte is not part of the number.
 */
export function serialHex(der: Uint8Array): string {
  return Buffer.from(der).toString('hex').toUpperCase().replace(/^(?:00)+(?=[0-9A-F]{2})/, '')
}

function identityOf(cert: Certificate): SignerIdentity {
  const organisation = nameValue(cert, OID.organisation)
  return {
    commonName: nameValue(cert, OID.commonName) ?? '(no common name)',
    ...(organisation ? { organisation } : {}),
    serial: serialHex(cert.serialNumber.valueBlock.valueHexView),
  }
}

/**
 * The certificate a signer info names: by issuer and serial number, or by subject key identifier
 * (the SHA-1 of the public key, as RFC 5280 suggests and OpenSSL writes with `cms -keyid`).
 */
function signerCertificate(signedData: SignedData, signerInfo: SignerInfo): Certificate | undefined {
  const certificates = (signedData.certificates ?? []).filter((c): c is Certificate => c instanceof Certificate)
  const sid = signerInfo.sid
  if (sid instanceof IssuerAndSerialNumber) {
    return certificates.find(c => c.issuer.isEqual(sid.issuer) && c.serialNumber.isEqual(sid.serialNumber))
  }
  const tagged = sid as asn1js.Constructed | asn1js.Primitive
  const keyId = tagged.idBlock.isConstructed
    ? ((tagged as asn1js.Constructed).valueBlock.value[0] as asn1js.OctetString | undefined)?.valueBlock.valueHexView
    : (tagged as asn1js.Primitive).valueBlock.valueHexView
  if (!keyId) return undefined
  return certificates.find(c => createHash('sha1').update(c.subjectPublicKeyInfo.subjectPublicKey.valueBlock.valueHexView).digest().equals(keyId))
}

function attributeValue(signerInfo: SignerInfo, type: string) {
  return signerInfo.signedAttrs?.attributes.find(a => a.type === type)?.values[0]
}

async function issuedByThisServer(certDer: Uint8Array): Promise<boolean> {
  const ca = await authorityCertificate()
  if (!ca) return false
  try {
    const cert = new X509Certificate(certDer)
    if (cert.fingerprint256 === ca.fingerprint256) return true
    return cert.checkIssued(ca) && cert.verify(ca.publicKey)
  }
  catch {
    return false
  }
}

/**
 * Check the last signature in a PDF, in JavaScript (see the top of this file for what is checked).
 * Never throws for what is in the file: a non-PDF, a file without signature or a broken structure
 * gives `signed: false` (or `valid: false` once a signature was found) with a reason.
 */
export async function inspectSignedPdf(pdf: Buffer): Promise<PdfInspection> {
  const sha256 = createHash('sha256').update(pdf).digest('hex')
  const result: PdfInspection = { signed: false, valid: false, coversWholeFile: false, sha256, trustedByThisServer: false }
  if (!looksLikePdf(pdf)) return { ...result, reason: 'This is not a PDF file: it does not start with the PDF header (%PDF-).' }

  const text = pdf.toString('latin1')
  const spot = findSignatures(text)[0]
  if (!spot) return { ...result, reason: 'No signature found: the file has no signed signature field.' }
  result.signed = true
  const fail = (reason: string) => ({ ...result, valid: false, reason })

  const [start, holeStart, holeEnd, tailLength] = spot.range
  if (start !== 0 || holeStart < 1 || holeEnd <= holeStart + 1 || holeEnd + tailLength > pdf.length) {
    return fail(`The signature's byte range [${spot.range.join(' ')}] does not fit this file of ${pdf.length} bytes: the file was changed after signing or is damaged.`)
  }
  result.coversWholeFile = holeEnd + tailLength === pdf.length

  // The hole must be exactly the /Contents hex string of a signature dictionary.
  const hole = text.slice(holeStart, holeEnd)
  if (!/\/Contents\s*$/.test(text.slice(Math.max(0, holeStart - 32), holeStart)) || hole[0] !== '<' || hole[hole.length - 1] !== '>') {
    return fail('The signature\'s byte range does not leave out exactly its /Contents: the file was changed after signing or is damaged.')
  }
  const hex = hole.slice(1, -1).replace(/\s+/g, '')
  if (!/^[0-9a-fA-F]*$/.test(hex) || hex.length % 2 !== 0) {
    return fail('The signature itself is damaged (its /Contents is not hexadecimal): the file was changed after signing.')
  }
  const cms = Buffer.from(hex, 'hex')
  const parsed = asn1js.fromBER(new Uint8Array(cms))
  if (parsed.offset === -1) return fail('The signature itself is damaged (its CMS data cannot be read): the file was changed after signing.')
  // Signers pad the space left for the signature with zeros; anything else there was written later.
  if (cms.subarray(parsed.offset).some(b => b !== 0)) {
    return fail('The space kept for the signature holds data after the signature: the file was changed after signing.')
  }

  let signedData: SignedData
  let signerInfo: SignerInfo
  let cert: Certificate
  try {
    const contentInfo = new ContentInfo({ schema: parsed.result })
    if (contentInfo.contentType !== OID.signedData) return fail('The signature is not a CMS SignedData structure.')
    signedData = new SignedData({ schema: contentInfo.content })
    if (signedData.signerInfos.length !== 1) return fail(`The signature has ${signedData.signerInfos.length} signers; a PDF signature has exactly one.`)
    signerInfo = signedData.signerInfos[0]!
    const found = signerCertificate(signedData, signerInfo)
    if (!found) return fail('The signature does not carry its signer\'s certificate, so it cannot be checked.')
    cert = found
  }
  catch (error) {
    return fail(`The signature itself is damaged (${(error as Error).message}): the file was changed after signing.`)
  }
  result.signer = identityOf(cert)
  const dictionary = signatureDictionary(text, spot.at)
  const signerName = dictionaryName(dictionary)
  if (signerName) result.signerName = signerName
  const certDer = new Uint8Array(cert.toSchema().toBER())
  result.trustedByThisServer = await issuedByThisServer(certDer)

  const signingTime = attributeValue(signerInfo, OID.signingTime) as asn1js.UTCTime | asn1js.GeneralizedTime | undefined
  const signedAt = signingTime && 'toDate' in signingTime ? signingTime.toDate() : undefined
  result.signedAt = signedAt && !Number.isNaN(signedAt.getTime()) ? signedAt.toISOString() : dictionaryTime(dictionary)

  const digestName = DIGESTS[signerInfo.digestAlgorithm.algorithmId]
  if (!digestName) return fail(`The signature uses a digest this server does not check (${signerInfo.digestAlgorithm.algorithmId}).`)
  const content = Buffer.concat([pdf.subarray(0, holeStart), pdf.subarray(holeEnd, holeEnd + tailLength)])
  const digestAttribute = attributeValue(signerInfo, OID.messageDigest) as asn1js.OctetString | undefined
  if (digestAttribute) {
    const digest = createHash(digestName).update(content).digest()
    if (!digest.equals(Buffer.from(digestAttribute.valueBlock.valueHexView))) {
      return fail('Digest mismatch: the signed content was changed after signing.')
    }
  }
  try {
    const checked = await signedData.verify({ signer: 0, data: new Uint8Array(content).buffer, extendedMode: true, checkChain: false })
    if (!checked.signatureVerified) return fail('The signature does not match its signer\'s certificate: the signature or the signed content was changed.')
  }
  catch (error) {
    return fail(`The signature cannot be verified: ${(error as Error).message}.`)
  }
  if (!result.coversWholeFile) {
    return fail(`The signature is intact, but ${pdf.length - holeEnd - tailLength} bytes were added to the file after signing.`)
  }
  return { ...result, valid: true }
}

// ── the upload of a PDF to check ──

function tooLarge(size: number) {
  return createError({
    statusCode: 413,
    message: `The upload is ${(size / 1024 / 1024).toFixed(1)} MB; the largest file this check accepts is ${MAX_MINUTES_CHECK_BYTES / 1024 / 1024} MB. Minutes signed here are far smaller: check that this is the minutes file.`,
  })
}

/**
 * The PDF from a multipart upload (part `file`), read only after its declared length fits:
 * 400 not multipart or no file, 411 no length, 413 over 20 MB, 415 not a PDF (by content, not name).
 */
export async function readPdfUpload(event: H3Event): Promise<{ filename: string, bytes: Buffer }> {
  const contentType = getRequestHeader(event, 'content-type') ?? ''
  if (!contentType.startsWith('multipart/form-data')) {
    throw createError({ statusCode: 400, message: 'Send the PDF as multipart/form-data, in a part named "file".' })
  }
  const declared = Number(getRequestHeader(event, 'content-length'))
  if (!Number.isFinite(declared) || declared <= 0) {
    throw createError({ statusCode: 411, message: 'The upload must state its length (Content-Length).' })
  }
  if (declared > MAX_MINUTES_CHECK_BYTES + MULTIPART_ALLOWANCE) throw tooLarge(declared)

  let parts: Awaited<ReturnType<typeof readMultipartFormData>>
  try {
    parts = await readMultipartFormData(event)
  }
  catch {
    throw createError({ statusCode: 400, message: 'The upload could not be read as multipart/form-data. Try choosing the file again.' })
  }
  const part = parts?.find(p => p.name === 'file' && p.filename !== undefined)
  if (!part) throw createError({ statusCode: 400, message: 'Choose a PDF file to check (the part named "file" is missing).' })
  if (part.data.length > MAX_MINUTES_CHECK_BYTES) throw tooLarge(part.data.length)
  const filename = (part.filename ?? '').split(/[\\/]/).pop()!.replace(/\p{Cc}/gu, '').trim().slice(0, 200) || 'upload'
  if (part.data.length === 0) throw createError({ statusCode: 415, message: `This is not a PDF file: ${filename} is empty.` })
  if (!looksLikePdf(part.data)) {
    throw createError({ statusCode: 415, message: `This is not a PDF file: ${filename} does not start with the PDF header (%PDF-). Choose the minutes PDF itself.` })
  }
  return { filename, bytes: part.data }
}
