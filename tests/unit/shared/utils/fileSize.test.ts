import { describe, expect, it } from 'vitest'
import { fileSize } from '../../../../shared/utils/fileSize'

describe('fileSize', () => {
  it.each([
    [0, '0 bytes'],
    [1, '1 byte'],
    [1023, '1023 bytes'],
    [1024, '1 kB'],
    [14_700, '14 kB'],
    [1024 * 1024 - 1, '1024 kB'],
    [1024 * 1024, '1.0 MB'],
    [5 * 1024 * 1024 + 1, '5.0 MB'],
    [20.45 * 1024 * 1024, '20.4 MB'],
  ])('%d bytes read as %s', (bytes, words) => {
    expect(fileSize(bytes)).toBe(words)
  })

  it('says nothing for a size that is not one', () => {
    expect(fileSize(-1)).toBe('')
    expect(fileSize(Number.NaN)).toBe('')
  })
})
