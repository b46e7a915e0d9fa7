import { mkdtempSync, readFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { describe, expect, it } from 'vitest'
// @ts-expect-error plain ESM script without types
import { loadEnv, parseEnv } from '../../../scripts/lib/env.mjs'

describe('the .env file', () => {
  it('parses KEY=VALUE lines, quotes and comments', () => {
    expect(parseEnv('# note\nA=1\n B = "two words" \nC=\'x=y\'\n\nnot a line')).toEqual({ A: '1', B: 'two words', C: 'x=y' })
  })

  it('generates secrets once and keeps them on the next run', () => {
    const file = join(mkdtempSync(join(tmpdir(), 'cp-env-')), '.env')
    const first = loadEnv(file)
    expect(first.NUXT_SESSION_PASSWORD.length).toBeGreaterThanOrEqual(32)
    const second = loadEnv(file)
    expect(second.NUXT_SESSION_PASSWORD).toBe(first.NUXT_SESSION_PASSWORD)
    expect(readFileSync(file, 'utf8').match(/NUXT_SESSION_PASSWORD=/g)).toHaveLength(1)
  })
})
