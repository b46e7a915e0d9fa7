import { createHash } from 'node:crypto'
import type { Page } from '@playwright/test'
import { inspectSignedPdf, signPdf } from '../../server/utils/pdfSigning'
import { PNG_BYTES, offsetInSignedStream, sampleMinutesPdf, withFlippedByte } from '../fixtures/minutes/sampleMinutes'
import { expect, test } from './fixtures'

/**
 * The public check page, without signing in. The minutes are signed here with the server's own key
 * (COUNTERPOISE_SIGNING_*, which npm test gives the server and the tests alike).
 */
let unsigned: Buffer
let signed: Buffer
let tampered: Buffer
let signerName: string

test.beforeAll(async () => {
  if (!process.env.COUNTERPOISE_SIGNING_P12) {
    throw new Error('COUNTERPOISE_SIGNING_P12 is not set: run the end-to-end tests through `npm test`, which gives the server and the tests the signing key.')
  }
  unsigned = await sampleMinutesPdf('Minutes of the harbour room')
  signed = await signPdf(unsigned, { signerName: 'Harbour Secretary', reason: 'Minutes of the harbour room', location: 'Counterpoise', contactInfo: 'secretary@example.org' })
  tampered = withFlippedByte(signed, offsetInSignedStream(signed))
  signerName = (await inspectSignedPdf(signed)).signer!.commonName
})

async function openCheckPage(page: Page) {
  await page.goto('/check-minutes')
  await expect(page).toHaveURL(/\/check-minutes$/)
  await expect(page.getByRole('heading', { level: 1, name: 'Check minutes' })).toBeVisible()
  // The input is enabled once the page's script runs (a file chosen earlier would be ignored).
  await expect(page.getByTestId('check-input')).toBeEnabled()
}

const choose = (page: Page, name: string, buffer: Buffer, mimeType = 'application/pdf') =>
  page.getByTestId('check-input').setInputFiles({ name, mimeType, buffer })

test('signed minutes are valid; the same file with one byte changed is not', async ({ page }) => {
  await openCheckPage(page)
  const verdict = page.getByTestId('verdict')
  const title = page.getByTestId('verdict-title')

  await choose(page, 'harbour-minutes.pdf', signed)
  await expect(title).toHaveText('Valid signature')
  await expect(verdict).toHaveAttribute('data-verdict', 'valid')
  // Keyboard and screen-reader users land on the verdict.
  await expect(title).toBeFocused()
  // Who signed (the name in the signature), beside the certificate it was signed with.
  await expect(page.getByTestId('check-details')).toContainText('Signed by')
  await expect(page.getByTestId('check-signer-name')).toHaveText('Harbour Secretary')
  await expect(page.getByTestId('check-signer')).toContainText(signerName)
  await expect(page.getByTestId('check-signed-at')).toHaveAttribute('datetime', /^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.000Z$/)
  await expect(page.getByTestId('check-coverage')).toHaveText('Yes: the signature covers every byte of the file.')
  await expect(page.getByTestId('check-trust')).toHaveText('Issued by this server\'s own certificate authority.')
  await expect(page.getByTestId('check-record')).toContainText('No minutes with exactly these bytes were signed on this server.')
  await expect(page.getByTestId('check-sha256')).toHaveText(createHash('sha256').update(signed).digest('hex'))

  await choose(page, 'harbour-minutes-changed.pdf', tampered)
  await expect(title).toHaveText('Not valid: the file was changed after signing')
  await expect(verdict).toHaveAttribute('data-verdict', 'changed')
  await expect(page.getByTestId('verdict-reason')).toContainText('Digest mismatch')
  // What a changed file claims about its signer is shown as a claim, with no word on trust.
  await expect(page.getByTestId('check-details')).toContainText('Certificate named in the signature')
  await expect(page.getByTestId('check-details')).toContainText('Signer named in the signature')
  await expect(page.getByTestId('check-details')).not.toContainText('Signed by')
  await expect(page.getByTestId('check-signer-name')).toHaveText('Harbour Secretary')
  await expect(page.getByTestId('check-trust')).toHaveCount(0)
  await expect(page.getByTestId('check-sha256')).toHaveText(createHash('sha256').update(tampered).digest('hex'))
})

test('the signer\'s name is shown as text, whatever it holds', async ({ page }) => {
  const name = 'Siân <b>Ó Briain</b> <img src=x> 書記'
  const minutes = await signPdf(unsigned, { signerName: name, reason: 'Minutes of the harbour room', location: 'Counterpoise', contactInfo: '' })
  await openCheckPage(page)
  await choose(page, 'named-minutes.pdf', minutes)
  await expect(page.getByTestId('verdict-title')).toHaveText('Valid signature')
  await expect(page.getByTestId('check-signer-name')).toHaveText(name)
  await expect(page.getByTestId('check-details').locator('b, img')).toHaveCount(0)
})

test('a PDF without signature and a picture get their own verdicts', async ({ page }) => {
  await openCheckPage(page)
  const title = page.getByTestId('verdict-title')

  await choose(page, 'draft.pdf', unsigned)
  await expect(title).toHaveText('No signature found')
  await expect(page.getByTestId('check-signer')).toHaveCount(0)
  await expect(page.getByTestId('check-signer-name')).toHaveCount(0)

  await choose(page, 'photo-of-minutes.pdf', PNG_BYTES, 'image/png')
  await expect(title).toHaveText('Not a PDF')
  await expect(page.getByTestId('verdict')).toContainText('This is not a PDF file')
  await expect(page.getByTestId('check-details')).toHaveCount(0)
})

test('a file dropped on the page is checked too', async ({ page }) => {
  await openCheckPage(page)
  const dataTransfer = await page.evaluateHandle((bytes) => {
    const transfer = new DataTransfer()
    transfer.items.add(new File([new Uint8Array(bytes)], 'dropped-minutes.pdf', { type: 'application/pdf' }))
    return transfer
  }, [...signed])
  await page.getByTestId('check-drop').dispatchEvent('drop', { dataTransfer })
  await expect(page.getByTestId('verdict-title')).toHaveText('Valid signature')
  await expect(page.getByTestId('check-details')).toContainText('dropped-minutes.pdf')
})
