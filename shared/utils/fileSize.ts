/**
 * A file's size in words for people: "830 bytes", "14 kB", "4.2 MB". Binary multiples (1 kB = 1,024
 * bytes), as the upload limits are set; kilobytes are rounded to whole ones, megabytes to one decimal.
 */
export function fileSize(bytes: number): string {
  if (!Number.isFinite(bytes) || bytes < 0) return ''
  if (bytes < 1024) return `${bytes} ${bytes === 1 ? 'byte' : 'bytes'}`
  if (bytes < 1024 * 1024) return `${Math.round(bytes / 1024)} kB`
  return `${(bytes / 1024 / 1024).toFixed(1)} MB`
}
