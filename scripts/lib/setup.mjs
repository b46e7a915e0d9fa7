// Steps shared by `npm start` and `npm test`: dependencies, secrets, database, migrations, demo.
import { existsSync, readdirSync, statSync } from 'node:fs'
import { ensureCluster, defaultDataDir } from './postgres.mjs'
import { loadEnv } from './env.mjs'
import { log, run } from './run.mjs'

const mtime = file => (existsSync(file) ? statSync(file).mtimeMs : 0)

/** npm ci on a fresh clone, npm install when package.json changed since the last install. */
export function ensureDependencies() {
  const marker = 'node_modules/.package-lock.json'
  const stale = !existsSync(marker) || mtime('package.json') > mtime(marker) || mtime('package-lock.json') > mtime(marker)
  if (!stale) return
  log('installing dependencies')
  const fresh = !existsSync('node_modules')
  run('npm', fresh && existsSync('package-lock.json') ? ['ci', '--no-audit', '--no-fund'] : ['install', '--no-audit', '--no-fund'])
}

/** Environment for the app, with DATABASE_URL pointing at a running database. */
export function prepareEnvironment({ dataDir, port, throwaway = false } = {}) {
  const env = loadEnv()
  if (!env.DATABASE_URL) {
    env.DATABASE_URL = ensureCluster({
      dataDir: dataDir ?? env.COUNTERPOISE_PG_DATA ?? defaultDataDir(),
      port: Number(port ?? env.COUNTERPOISE_PG_PORT ?? 54329),
      throwaway,
    })
  }
  else {
    log('using DATABASE_URL from the environment')
  }
  return env
}

export function migrateAndSeed(env) {
  run('npx', ['tsx', 'scripts/migrate.ts'], { env })
  run('npx', ['tsx', 'scripts/seed.ts'], { env })
}

/** Whether .output is older than any source it is built from. */
export function buildIsStale() {
  const built = mtime('.output/nitro.json')
  if (!built) return true
  const sources = ['nuxt.config.ts', 'tailwind.config.ts', 'package-lock.json', 'app', 'server', 'shared', 'public']
  const newer = (path) => {
    if (!existsSync(path)) return false
    const stat = statSync(path)
    if (stat.mtimeMs > built) return true
    if (!stat.isDirectory()) return false
    return readdirSync(path).some(name => newer(`${path}/${name}`))
  }
  return sources.some(newer)
}

/**
 * With no SMTP_URL configured, start the local mail catcher (development and tests) and point
 * the app at it; messages land in MAIL_DIR and show on the /dev/mail page. Imported lazily:
 * smtp-server exists only after the dependencies are installed.
 */
export async function ensureMail(env, { port = Number(env.SMTP_PORT || 2525), dir = env.MAIL_DIR || '.data/mail' } = {}) {
  if (env.SMTP_URL) {
    log('sending mail through SMTP_URL')
    return null
  }
  const { startMailCatcher } = await import('./mailCatcher.mjs')
  let catcher
  try {
    catcher = await startMailCatcher({ port, dir, quiet: false })
  }
  catch (error) {
    if (error.code !== 'EADDRINUSE') throw error
    catcher = await startMailCatcher({ port: 0, dir, quiet: false })
  }
  env.SMTP_URL = catcher.url
  env.MAIL_DIR = catcher.dir
  env.COUNTERPOISE_DEV_MAIL = '1'
  log(`mail goes to the local catcher at ${catcher.url}; read it at /dev/mail`)
  return catcher
}
