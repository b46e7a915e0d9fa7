// The git-ignored .env: secrets generated on first run, read on every run.
import { randomBytes } from 'node:crypto'
import { existsSync, readFileSync, writeFileSync } from 'node:fs'

/** Parse KEY=VALUE lines (no expansion); comments and blank lines are skipped. */
export function parseEnv(text) {
  const values = {}
  for (const line of text.split(/\r?\n/)) {
    const match = /^\s*([A-Z0-9_]+)\s*=\s*(.*?)\s*$/i.exec(line)
    if (!match || line.trimStart().startsWith('#')) continue
    values[match[1]] = match[2].replace(/^(['"])(.*)\1$/, '$2')
  }
  return values
}

const GENERATED = {
  NUXT_SESSION_PASSWORD: () => randomBytes(32).toString('base64url'),
}

/**
 * Make sure .env exists with every generated secret, then return the effective environment:
 * the process's own variables win over .env, so CI and hosting can override anything.
 */
export function loadEnv(file = '.env') {
  const text = existsSync(file) ? readFileSync(file, 'utf8') : '# Written by npm start / npm test. Git-ignored; keep it secret.\n'
  const values = parseEnv(text)
  let additions = ''
  for (const [key, make] of Object.entries(GENERATED)) {
    if (!values[key]) {
      values[key] = make()
      additions += `${key}=${values[key]}\n`
    }
  }
  if (additions) writeFileSync(file, text.endsWith('\n') ? text + additions : `${text}\n${additions}`, { mode: 0o600 })
  return { ...values, ...process.env }
}
