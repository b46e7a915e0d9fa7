#!/usr/bin/env node
// Run the local mail catcher on its own:
//   node scripts/mail-catcher.mjs [--port 2525] [--dir .data/mail]
// The port also comes from SMTP_PORT, the directory from MAIL_DIR. Stops cleanly on SIGINT/SIGTERM.
import process from 'node:process'
import { parseArgs } from 'node:util'
import { startMailCatcher } from './lib/mailCatcher.mjs'

const { values } = parseArgs({
  options: {
    port: { type: 'string' },
    dir: { type: 'string' },
    quiet: { type: 'boolean', default: false },
  },
})
const port = Number(values.port ?? process.env.SMTP_PORT ?? 2525)
if (!Number.isInteger(port) || port < 0 || port > 65535) {
  console.error(`[mail-catcher] --port must be a port number (0 for any free port), not "${values.port ?? process.env.SMTP_PORT}"`)
  process.exit(2)
}

try {
  const catcher = await startMailCatcher({ port, dir: values.dir ?? process.env.MAIL_DIR ?? '.data/mail', quiet: values.quiet })
  // One parseable line for scripts that start the catcher and need its address.
  console.log(`[mail-catcher] listening on ${catcher.url}, storing messages in ${catcher.dir}`)
  let stopping = false
  for (const signal of ['SIGINT', 'SIGTERM']) {
    process.on(signal, () => {
      if (stopping) return
      stopping = true
      catcher.close().then(() => process.exit(0))
    })
  }
}
catch (error) {
  console.error(`[mail-catcher] could not start: ${error.message}`)
  process.exit(1)
}
