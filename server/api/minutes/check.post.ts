/**
 * Check minutes (public, no sign-in): the signature of an uploaded PDF, checked here, and whether
 * this server holds minutes with exactly the same bytes. Nothing is stored.
 * 400 not a multipart upload with a `file`, 411 no length, 413 over 20 MB, 415 not a PDF,
 * 429 too many checks from one address (server/utils/checkThrottle.ts); otherwise 200 with the inspection (an invalid or missing signature is a result, not an error).
 */
export default defineEventHandler(async (event) => {
  assertCheckAllowed(event)
  const upload = await readPdfUpload(event)
  const inspection = await inspectSignedPdf(upload.bytes)
  const record = await findMinutesRecordBySha256(inspection.sha256)
  return { filename: upload.filename, size: upload.bytes.length, ...inspection, record }
})
