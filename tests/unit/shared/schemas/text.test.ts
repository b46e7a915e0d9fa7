/**
 * Control characters in names and texts (shared/schemas/text.ts), as every form and route sees them:
 * one-line names refuse line breaks, tabs, NUL and the rest of Unicode's Cc category and the line
 * and paragraph separators; longer texts keep line breaks and tabs but refuse the others. The
 * category is Unicode's own (General_Category=Cc, U+0000–U+001F and U+007F–U+009F per the Unicode
 * Character Database); the loop below checks every one of them against the rule.
 */
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { SignUpBody } from '../../../../shared/schemas/auth'
import { AlternativeInput, CriterionInput } from '../../../../shared/schemas/ledger'
import { RecordResolutionBody } from '../../../../shared/schemas/resolution'
import { CreateRoomBody } from '../../../../shared/schemas/rooms'
import { forbiddenAt, MULTI_LINE_FORBIDDEN, SINGLE_LINE_FORBIDDEN } from '../../../../shared/schemas/text'

const CC = [...Array.from({ length: 0x20 }, (_, i) => i), ...Array.from({ length: 0x21 }, (_, i) => 0x7F + i)].map(c => String.fromCodePoint(c))

describe('which characters are refused', () => {
  it('one-line names refuse all 65 control characters and U+2028/U+2029, and nothing printable', () => {
    expect(CC).toHaveLength(65)
    for (const c of [...CC, '\u2028', '\u2029']) expect(SINGLE_LINE_FORBIDDEN.test(`a${c}b`), `U+${c.codePointAt(0)!.toString(16)}`).toBe(true)
    for (const ok of ['Rock revetment', 'Café £m', 'ダム', '☔️ plan', 'a\u00A0b', 'x\u200Dy', '\uFFFD']) expect(SINGLE_LINE_FORBIDDEN.test(ok)).toBe(false)
  })

  it('longer texts keep tab, line feed and carriage return, and refuse the other control characters', () => {
    for (const c of CC) {
      const allowed = c === '\t' || c === '\n' || c === '\r'
      expect(MULTI_LINE_FORBIDDEN.test(`a${c}b`), `U+${c.codePointAt(0)!.toString(16)}`).toBe(!allowed)
    }
  })

  it('refuses the bidirectional overrides and isolates in names and texts alike', () => {
    for (const c of ['\u202A', '\u202B', '\u202C', '\u202D', '\u202E', '\u2066', '\u2067', '\u2068', '\u2069']) {
      expect(SINGLE_LINE_FORBIDDEN.test(`a${c}b`)).toBe(true)
      expect(MULTI_LINE_FORBIDDEN.test(`a${c}b`)).toBe(true)
    }
    // The marks that right-to-left text needs stay allowed.
    expect(SINGLE_LINE_FORBIDDEN.test('\u200Fשלום\u200E')).toBe(false)
    expect(forbiddenAt('invoice\u202Efdp.exe', SINGLE_LINE_FORBIDDEN)).toEqual({ position: 8, code: 'U+202E' })
  })

  it('says where the first one is, 1-based, as U+XXXX', () => {
    expect(forbiddenAt('Rock\u0007 revetment\u0000', SINGLE_LINE_FORBIDDEN)).toEqual({ position: 5, code: 'U+0007' })
    expect(forbiddenAt('plain', SINGLE_LINE_FORBIDDEN)).toBeNull()
  })
})

describe('the schemas apply the rule', () => {
  const criterion = { id: 'cost', name: 'Capital cost', unit: '£m', direction: 'min' }
  it('criterion names, units and alternative names are one line', () => {
    expect(CriterionInput.safeParse(criterion).success).toBe(true)
    const named = CriterionInput.safeParse({ ...criterion, name: 'Capital\ncost' })
    expect(named.success).toBe(false)
    expect(named.error!.issues[0]!.path).toEqual(['name'])
    expect(named.error!.issues[0]!.message).toBe('A criterion name must stay on one line, without tabs or control characters (character 8 is U+000A).')
    expect(CriterionInput.safeParse({ ...criterion, unit: '£\u0000m' }).success).toBe(false)
    expect(AlternativeInput.safeParse({ id: 'a', name: 'Dune\u0085restoration', scores: {} }).success).toBe(false)
    // Surrounding line breaks are trimmed away before the rule looks.
    expect(AlternativeInput.safeParse({ id: 'a', name: '\nDune restoration\r\n', scores: {} }).data?.name).toBe('Dune restoration')
  })

  it('a description keeps its line breaks; a NUL in it is refused', () => {
    expect(CriterionInput.safeParse({ ...criterion, description: 'First line.\nSecond line.' }).success).toBe(true)
    expect(CriterionInput.safeParse({ ...criterion, description: 'First\u0000' }).success).toBe(false)
  })

  it('room titles, names of people and the resolution texts follow the same rules', () => {
    expect(CreateRoomBody.safeParse({ title: 'Sea\tfront', question: 'Which scheme?' }).success).toBe(false)
    expect(CreateRoomBody.safeParse({ title: 'Sea front', question: 'Which scheme?\nAnd when?' }).success).toBe(true)
    expect(CreateRoomBody.safeParse({ title: 'Sea front', question: 'Which \u001bscheme?' }).success).toBe(false)
    expect(SignUpBody.safeParse({ displayName: 'Bea\u0008 Quiller', email: 'bea@example.com', password: 'long enough pass' }).success).toBe(false)
    expect(RecordResolutionBody.safeParse({ alternativeId: 'a', rationale: 'Because\n- cheapest\n- fastest' }).success).toBe(true)
    expect(RecordResolutionBody.safeParse({ alternativeId: 'a', rationale: 'Because\u0000' }).success).toBe(false)
  })

  it('any name without control characters passes the one-line rule (property)', () => {
    const printable = fc.string({ unit: 'grapheme', minLength: 1, maxLength: 60 }).filter(s => !/[\p{Cc}\u2028\u2029\u202A-\u202E\u2066-\u2069]/u.test(s) && s.trim().length > 0)
    fc.assert(fc.property(printable, name => AlternativeInput.safeParse({ id: 'a', name, scores: {} }).success === (name.trim().length <= 120)))
  })
})
