import { describe, expect, it } from 'vitest'
import { safeRedirect } from '../../../../shared/utils/redirect'

describe('safeRedirect', () => {
  it.each([
    ['/rooms/new', '/rooms/new'],
    ['/rooms/abc?tab=people#top', '/rooms/abc?tab=people#top'],
  ])('keeps a path on this site: %s', (input, expected) => {
    expect(safeRedirect(input)).toBe(expected)
  })

  it.each([
    ['an absolute URL', 'https://elsewhere.example/phish'],
    ['a protocol-relative URL', '//elsewhere.example'],
    ['a backslash trick', '/\\elsewhere.example'],
    ['a tab inside', '/\t/elsewhere.example'],
    ['a javascript: URL', 'javascript:alert(1)'],
    ['a relative path without slash', 'rooms'],
    ['an empty string', ''],
    ['an array (repeated query parameter)', ['/rooms', '/admin']],
    ['undefined', undefined],
  ])('falls back for %s', (_label, input) => {
    expect(safeRedirect(input)).toBe('/rooms')
    expect(safeRedirect(input, '/')).toBe('/')
  })
})
