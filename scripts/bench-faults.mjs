#!/usr/bin/env node
/**
 * `npm run bench:faults`: the fault tests at full size. npm test runs them with a handful of phones;
 * this runs the same files (tests/server/crash.test.ts, failover.test.ts, dbRestart.test.ts) with
 * COUNTERPOISE_FAULT_PHONES phones (200 unless set), through scripts/test.mjs, so they get their
 * own throwaway database and a fresh build exactly as in npm test. The tests assert everything
 * (every acknowledged submission stored exactly once, nothing lost after the switch-over); this
 * script adds the figures they print to a table, and keeps the whole output in
 * docs/bench/faults-<date>.txt when run with --save.
 */
import { spawn } from 'node:child_process'
import { mkdirSync, writeFileSync } from 'node:fs'

const phones = process.env.COUNTERPOISE_FAULT_PHONES || '200'
const files = ['tests/server/crash.test.ts', 'tests/server/failover.test.ts', 'tests/server/dbRestart.test.ts']
const started = Date.now()
let output = ''
const code = await new Promise((resolve) => {
  const child = spawn(process.execPath, ['scripts/test.mjs', 'server', ...files], {
    env: { ...process.env, COUNTERPOISE_FAULT_PHONES: phones },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  for (const stream of [child.stdout, child.stderr]) {
    stream.on('data', (chunk) => {
      output += chunk
      process.stdout.write(chunk)
    })
  }
  child.on('exit', status => resolve(status ?? 1))
})

const found = pattern => output.split('\n').find(line => pattern.test(line))?.replace(/^.*?(\[\w+\])/, '$1').trim()
const rows = [
  ['kill -9 mid-round (crash.test.ts)', found(/\[faults\] kill -9/) ?? '(no figures printed)'],
  ['one of two app processes stopped (failover.test.ts)', found(/\[failover\]/) ?? '(no figures printed)'],
  ['PostgreSQL restarted under the app (dbRestart.test.ts)', found(/\[db-restart\]/) ?? (code === 0 ? 'passed' : '(see output)')],
]
const width = Math.max(...rows.map(r => r[0].length))
const table = [
  `Fault tests at full size: ${phones} phones, ${new Date().toISOString()}, ${Math.round((Date.now() - started) / 1000)} s, exit ${code}`,
  ...rows.map(([what, figures]) => `${what.padEnd(width)}  ${figures}`),
].join('\n')
console.log(`\n${table}`)
if (process.argv.includes('--save')) {
  mkdirSync('docs/bench', { recursive: true })
  const file = `docs/bench/faults-${new Date().toISOString().slice(0, 10)}.txt`
  const colours = new RegExp(`${String.fromCharCode(27)}\\[[0-9;]*m`, 'g')
  const plain = output.replace(colours, '').split('\n')
  const kept = plain.filter(line => /^\s*\[(faults|failover|crash)\]|✓ .*test\.ts|✓ (comes|requests|the phones)|× |Test Files|Tests {2}|server tests \(/.test(line))
  writeFileSync(file, `${table}\n\n${kept.map(line => line.slice(0, 400)).join('\n')}\n`)
  console.log(`Saved in ${file}`)
}
process.exit(code)
