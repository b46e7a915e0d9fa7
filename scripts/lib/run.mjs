// Small process helpers for the set-up scripts. Plain Node: these run before dependencies exist.
import { spawn, spawnSync } from 'node:child_process'

/** Run a command to completion, inheriting stdio; throws with the command line on a non-zero exit. */
export function run(cmd, args, options = {}) {
  const result = spawnSync(cmd, args, { stdio: 'inherit', ...options })
  if (result.error) throw new Error(`${cmd} could not start: ${result.error.message}`)
  if (result.status !== 0) {
    throw new Error(`${[cmd, ...args].join(' ')} exited with ${result.status ?? result.signal}`)
  }
  return result
}

/** Run a command and return its trimmed stdout (stderr passes through); null when it fails. */
export function capture(cmd, args, options = {}) {
  const result = spawnSync(cmd, args, { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'], ...options })
  if (result.error || result.status !== 0) return null
  return result.stdout.trim()
}

/** Start a long-running child; resolves its exit code. */
export function start(cmd, args, options = {}) {
  const child = spawn(cmd, args, { stdio: 'inherit', ...options })
  const exited = new Promise((resolve) => {
    child.on('exit', (code, signal) => resolve(code ?? (signal ? 1 : 0)))
  })
  return { child, exited }
}

export function log(message) {
  process.stdout.write(`\u001B[1m[counterpoise]\u001B[0m ${message}\n`)
}

export const isRoot = () => typeof process.getuid === 'function' && process.getuid() === 0

/** Install Debian packages when missing (root only); returns false when they are missing and cannot be installed. */
export function ensureDebianPackages(packages) {
  const missing = packages.filter(pkg => capture('dpkg-query', ['-W', '-f=${Status}', pkg]) !== 'install ok installed')
  if (missing.length === 0) return true
  if (!isRoot()) {
    log(`missing Debian packages: ${missing.join(' ')} (run: sudo apt-get install -y ${missing.join(' ')})`)
    return false
  }
  log(`installing Debian packages: ${missing.join(' ')}`)
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' }
  run('apt-get', ['update', '-q'], { env })
  run('apt-get', ['install', '-y', '-q', ...missing], { env })
  return true
}
