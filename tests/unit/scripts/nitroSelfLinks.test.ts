import { mkdirSync, mkdtempSync, realpathSync, rmSync, writeFileSync } from 'node:fs'
import { createRequire } from 'node:module'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, describe, expect, it } from 'vitest'
import { linkNitroSelfReferences } from '../../../scripts/lib/nitroSelfLinks'

const root = mkdtempSync(join(tmpdir(), 'counterpoise-selflinks-'))
afterAll(() => rmSync(root, { recursive: true, force: true }))

/**
 * A package shaped like @noble/hashes 1.x: a name, an `exports` map, and a file in a folder with
 * a package.json of its own (no name, as its esm/ folder has) that imports the package by name.
 */
function fakePackage(folder: string, version: string) {
  mkdirSync(join(folder, 'esm'), { recursive: true })
  writeFileSync(join(folder, 'package.json'), JSON.stringify({ name: '@demo/self', version, exports: { './inner': './esm/inner.js', './outer': './esm/outer.js' } }))
  writeFileSync(join(folder, 'esm', 'package.json'), JSON.stringify({ type: 'commonjs' }))
  writeFileSync(join(folder, 'esm', 'inner.js'), `module.exports = ${JSON.stringify(version)}`)
  writeFileSync(join(folder, 'esm', 'outer.js'), 'module.exports = require("@demo/self/inner")')
}

describe('linkNitroSelfReferences', () => {
  it('makes each traced copy of a package resolve its own name to itself, not to the hoisted copy', () => {
    const server = join(root, 'server')
    const store = join(server, 'node_modules', '.nitro', '@demo')
    fakePackage(join(store, 'self@1.0.0'), '1.0.0')
    fakePackage(join(store, 'self@2.0.0'), '2.0.0')
    // As the tracer lays it out: one version is linked at the top level.
    mkdirSync(join(server, 'node_modules', '@demo'), { recursive: true })
    fakePackage(join(server, 'node_modules', '@demo', 'self'), '2.0.0')
    const cache = createRequire(import.meta.url).cache
    const load = (file: string) => {
      for (const key of Object.keys(cache)) if (key.startsWith(root) || key.startsWith(realpathSync(root))) Reflect.deleteProperty(cache, key)
      return createRequire(file)(file)
    }

    // Before: version 1's self-import finds the top-level version 2.
    expect(load(join(store, 'self@1.0.0', 'esm', 'outer.js'))).toBe('2.0.0')
    const made = linkNitroSelfReferences(server)
    expect(made).toHaveLength(2)
    expect(realpathSync(join(store, 'self@1.0.0', 'node_modules', '@demo', 'self'))).toBe(realpathSync(join(store, 'self@1.0.0')))
    // After: each finds itself. Running it again changes nothing.
    expect(load(join(store, 'self@1.0.0', 'esm', 'outer.js'))).toBe('1.0.0')
    expect(load(join(store, 'self@2.0.0', 'esm', 'outer.js'))).toBe('2.0.0')
    expect(linkNitroSelfReferences(server)).toEqual([])
  })

  it('does nothing without a traced store', () => {
    expect(linkNitroSelfReferences(join(root, 'nothing-here'))).toEqual([])
  })
})
