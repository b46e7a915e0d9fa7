/**
 * A deployed build runs on its own: the `.output` folder copied somewhere with no node_modules
 * above it (as a deployment ships it) starts, serves the app, and draws the minutes PDF in Nunito,
 * whose two files travel inside the build as Nitro server assets. `pdffonts` (Debian's
 * poppler-utils) reads the fonts the PDF embeds.
 */
import { spawnSync } from 'node:child_process'
import { cpSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { newPerson } from '../support/client'
import { startBuiltServer, type RunningServer } from '../support/server'

let dir = ''
let server: RunningServer

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'counterpoise-deployed-'))
  cpSync('.output', join(dir, '.output'), { recursive: true })
  // A server of its own, even when the suite is pointed at one (BASE_URL).
  const { BASE_URL: _shared, ...env } = process.env
  server = await startBuiltServer(env, undefined, dir)
}, 120_000)

afterAll(async () => {
  await server?.stop()
  if (dir) rmSync(dir, { recursive: true, force: true })
})

describe('a build copied away from the checkout', () => {
  it('serves pages and draws the minutes in Nunito without the project\'s node_modules', async () => {
    const page = await fetch(`${server.baseUrl}/sign-in`)
    expect(page.status).toBe(200)
    expect(await page.text()).toContain('Counterpoise')

    const { client } = await newPerson(server.baseUrl, 'deployed')
    const room = await client.post('/api/rooms', { title: 'Depot in a copied build', question: 'Which depot site?' })
    expect(room.status).toBe(201)
    const ledger = await client.request('PUT', `/api/rooms/${room.body.id}/ledger`, {
      baseVersion: 0,
      criteria: [{ id: 'cost', name: 'Cost', unit: '£k', direction: 'min' }, { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' }],
      alternatives: [{ id: 'a', name: 'North site', scores: { cost: 10, reach: 100 } }, { id: 'b', name: 'South site', scores: { cost: 20, reach: 300 } }],
    })
    expect(ledger.status).toBe(201)

    const answer = await fetch(`${server.baseUrl}/api/rooms/${room.body.id}/minutes/draft.pdf`, { headers: { cookie: client.cookie } })
    expect(answer.status).toBe(200)
    const file = join(dir, 'draft.pdf')
    writeFileSync(file, Buffer.from(await answer.arrayBuffer()))
    const fonts = spawnSync('pdffonts', [file], { encoding: 'utf8' })
    expect(fonts.status).toBe(0)
    expect(fonts.stdout).toMatch(/Nunito/)
    expect(fonts.stdout).not.toMatch(/Helvetica/)
  })
})
