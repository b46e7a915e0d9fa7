#!/usr/bin/env node
// `npm start` (built server) and `npm run dev` (hot reload): everything from a fresh clone.
import process from 'node:process'
import { DEMO } from './lib/demo-banner.mjs'
import { log, run, start } from './lib/run.mjs'
import { buildIsStale, ensureDependencies, ensureMail, migrateAndSeed, prepareEnvironment } from './lib/setup.mjs'
import { ensureDevSigningCert } from './lib/signingCert.mjs'

process.chdir(new URL('..', import.meta.url).pathname)
const dev = process.argv.includes('--dev')

try {
  ensureDependencies()
  const env = prepareEnvironment()
  // Without a configured signing key, a development CA and signer in .data/signing (git-ignored).
  const signing = ensureDevSigningCert({ env })
  Object.assign(env, { COUNTERPOISE_SIGNING_P12: signing.p12Path, COUNTERPOISE_SIGNING_PASSPHRASE: signing.passphrase, COUNTERPOISE_SIGNING_CA: signing.caCertPath })
  migrateAndSeed(env)
  const mail = await ensureMail(env)
  const port = env.PORT || '3000'
  const host = env.HOST || '0.0.0.0'
  env.PORT = port
  let server
  if (dev) {
    server = start('npx', ['nuxt', 'dev', '--port', port, '--host', host], { env: { ...env, NODE_ENV: 'development' } })
  }
  else {
    if (buildIsStale()) {
      log('building (a minute or two)')
      run('npx', ['nuxt', 'build'], { env: { ...env, NODE_ENV: 'production' } })
    }
    server = start('node', ['.output/server/index.mjs'], { env: { ...env, NODE_ENV: 'production', NITRO_PORT: port, NITRO_HOST: host } })
  }
  log(`Counterpoise is starting at http://localhost:${port}`)
  log(DEMO)
  // Ctrl-C reaches the whole process group; wait for the server to finish its own shutdown.
  for (const signal of ['SIGINT', 'SIGTERM']) {
    process.on(signal, () => server.child.kill(signal))
  }
  process.exitCode = await server.exited
  await mail?.close()
}
catch (error) {
  console.error(`\n[counterpoise] set-up failed: ${error.message}`)
  process.exitCode = 1
}
