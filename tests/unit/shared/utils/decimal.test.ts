import { describe, expect, it } from 'vitest'
import { parseDecimal } from '../../../../shared/utils/decimal'

describe('parseDecimal', () => {
  it.each([
    ['12', 12], ['12.5', 12.5], ['12,5', 12.5], [' -3 ', -3], ['+0,25', 0.25], ['.5', 0.5], [',5', 0.5], ['1e3', 1000], ['2.5E-2', 0.025], ['7.', 7],
  ])('reads %j as %d', (input, expected) => {
    expect(parseDecimal(input)).toBe(expected)
  })

  it.each(['', ' ', 'n/a', '1,234.5', '1.234,5', '12 £m', 'Infinity', 'NaN', '--1', '1e', '0x10', '1e999'])('refuses %j', (input) => {
    expect(parseDecimal(input)).toBeNull()
  })
})
