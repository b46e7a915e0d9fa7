import { describe, expect, it } from 'vitest'
import { palette } from '../../tailwind.config'

/** WCAG 2.x relative luminance and contrast ratio (formula from the WCAG 2.1 definition of "contrast ratio"). */
function luminance(hex: string) {
  const [r, g, b] = [1, 3, 5].map(i => Number.parseInt(hex.slice(i, i + 2), 16) / 255)
    .map(c => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4))
  return 0.2126 * r! + 0.7152 * g! + 0.0722 * b!
}
function contrast(a: string, b: string) {
  const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x)
  return (hi! + 0.05) / (lo! + 0.05)
}

describe('the palette', () => {
  it('checks the contrast function on known pairs', () => {
    // Black on white is 21:1 and equal colours 1:1 by the definition.
    expect(contrast('#000000', '#ffffff')).toBeCloseTo(21, 5)
    expect(contrast('#777777', '#777777')).toBeCloseTo(1, 5)
  })

  // Text pairs the app uses: WCAG AA asks 4.5:1 for body text.
  it.each([
    ['ink-800 text on sea-50 page', palette.ink[800], palette.sea[50]],
    ['ink-800 text on white card', palette.ink[800], '#ffffff'],
    ['white text on ink-800 button', '#ffffff', palette.ink[800]],
    ['slate-600 secondary text on white', palette.slate[600], '#ffffff'],
    ['slate-600 secondary text on sea-50', palette.slate[600], palette.sea[50]],
    ['slate-700 text on sea-50', palette.slate[700], palette.sea[50]],
    ['rust-700 error text on rust-50', palette.rust[700], palette.rust[50]],
    ['brass-700 label on white', palette.brass[700], '#ffffff'],
    ['ink-700 link on white', palette.ink[700], '#ffffff'],
    ['ink-800 on sea-100 table head', palette.ink[800], palette.sea[100]],
  ])('%s passes AA', (_label, fg, bg) => {
    expect(contrast(fg, bg)).toBeGreaterThanOrEqual(4.5)
  })
})
