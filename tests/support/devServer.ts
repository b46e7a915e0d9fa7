/**
 * Start `nuxt dev` for a test, on a free loopback port against the test database, so that the
 * development server's wiring (socket.io through Nitro's dev websocket proxy) is tested as well as
 * the built one. It runs in a process group of its own, led by a small watchdog that ends the whole
 * group if the test process goes away without stopping it (a crashed or killed vitest worker), so
 * no `nuxt dev` or bundler process is ever left behind.
 */
import { spawn } from 'node:child_process'
import { readdirSync, readFileSync } from 'node:fs'
import { resolve } from 'node:path'
import { freePort, waitForHealth, type RunningServer } from './server'

/** The group leader: runs the command, and ends the group when the watched process has gone. */
const WATCHDOG = `
const { spawn } = require('node:child_process')
const watched = Number(process.env.COUNTERPOISE_WATCHED_PID)
const [command, ...args] = JSON.parse(process.env.COUNTERPOISE_WATCHED_COMMAND)
const group = -process.pid
const signal = (name) => { try { process.kill(group, name) } catch {} }
// The group's SIGTERM is meant for nuxt: this process stays until nuxt has exited, then ends any
// stragglers (and itself) at once.
process.on('SIGTERM', () => {})
const child = spawn(command, args, { stdio: 'inherit', env: process.env })
child.on('exit', () => signal('SIGKILL'))
// A dead parent's children are handed to another parent at once (even while the dead one waits,
// a zombie, to be reaped), so a changed ppid is the surest sign.
const watch = setInterval(() => {
  let gone = process.ppid !== watched
  try { process.kill(watched, 0) } catch { gone = true }
  if (!gone) return
  clearInterval(watch)
  signal('SIGTERM')
  setTimeout(() => signal('SIGKILL'), 10000)
}, 1000)
`

/** Living (not zombie) processes whose process group is `pgid`, from /proc. */
export function groupMembers(pgid: number): number[] {
  const alive: number[] = []
  for (const entry of readdirSync('/proc')) {
    if (!/^\d+$/.test(entry)) continue
    let stat: string
    try {
      stat = readFileSync(`/proc/${entry}/stat`, 'utf8')
    }
    catch {
      continue // ended while we looked
    }
    // "pid (comm) state ppid pgrp …": comm may hold spaces and parentheses, so split after the last ")".
    const [state, , pgrp] = stat.slice(stat.lastIndexOf(')') + 2).split(' ')
    if (Number(pgrp) === pgid && state !== 'Z' && state !== 'X') alive.push(Number(entry))
  }
  return alive
}

export interface DevServer extends RunningServer {
  /** The process group of the watchdog, nuxt dev and everything they started. */
  pgid: number
}

/** Start `nuxt dev`, wait for /api/health (the first start compiles everything: give it minutes). */
export async function startDevServer(env: NodeJS.ProcessEnv = process.env, healthTimeoutMs = 240_000): Promise<DevServer> {
  if (!env.DATABASE_URL) throw new Error('DATABASE_URL is not set: run the tests through `npm test`, or export it from a running database.')
  const port = await freePort()
  // Not the built server's address or port: this one listens where the flags below say.
  const devEnv: NodeJS.ProcessEnv = Object.fromEntries(Object.entries(env)
    .filter(([name]) => !['BASE_URL', 'NITRO_PORT', 'NITRO_HOST', 'PORT', 'HOST', 'NUXT_PORT', 'NUXT_HOST'].includes(name)))
  Object.assign(devEnv, { NODE_ENV: 'development', NUXT_TELEMETRY_DISABLED: '1' })
  const command = [process.execPath, resolve('node_modules/nuxt/bin/nuxt.mjs'), 'dev', '--port', String(port), '--host', '127.0.0.1']
  const leader = spawn(process.execPath, ['-e', WATCHDOG], {
    detached: true,
    stdio: ['ignore', 'inherit', 'inherit'],
    env: { ...devEnv, COUNTERPOISE_WATCHED_PID: String(process.pid), COUNTERPOISE_WATCHED_COMMAND: JSON.stringify(command) },
  })
  const pgid = leader.pid!
  const exited = new Promise<void>(done => leader.once('exit', () => done()))

  let stopping: Promise<void> | undefined
  const stop = () => stopping ??= (async () => {
    const signal = (name: NodeJS.Signals) => {
      try {
        process.kill(-pgid, name)
      }
      catch { /* the group has gone */ }
    }
    signal('SIGTERM')
    const deadline = Date.now() + 20_000
    while (groupMembers(pgid).length > 0 && Date.now() < deadline) await new Promise(done => setTimeout(done, 200))
    if (groupMembers(pgid).length > 0) {
      console.error(`[dev server] still running 20 s after SIGTERM (${groupMembers(pgid).join(', ')}): killing the group`)
      signal('SIGKILL')
      while (groupMembers(pgid).length > 0) await new Promise(done => setTimeout(done, 100))
    }
    await exited
  })()

  const baseUrl = `http://127.0.0.1:${port}`
  try {
    await Promise.race([
      waitForHealth(baseUrl, healthTimeoutMs),
      exited.then(() => {
        throw new Error('nuxt dev exited before it became healthy')
      }),
    ])
  }
  catch (error) {
    await stop()
    throw error
  }
  return { baseUrl, child: leader, pgid, stop }
}
