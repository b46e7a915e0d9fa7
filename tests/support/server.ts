/**
 * Start the built server (.output) for server and end-to-end tests, or use BASE_URL when the
 * test script already runs one. Needs DATABASE_URL of a migrated database.
 */
import { spawn, type ChildProcess } from 'node:child_process'
import { createServer } from 'node:net'
import { existsSync } from 'node:fs'

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = createServer()
    probe.once('error', reject)
    probe.listen(0, '127.0.0.1', () => {
      const { port } = probe.address() as { port: number }
      probe.close(() => resolve(port))
    })
  })
}

export async function waitForHealth(baseUrl: string, timeoutMs = 30_000) {
  const deadline = Date.now() + timeoutMs
  let last = ''
  while (Date.now() < deadline) {
    try {
      const answer = await fetch(`${baseUrl}/api/health`)
      if (answer.ok) return
      last = `status ${answer.status}`
    }
    catch (error) {
      last = (error as Error).message
    }
    await new Promise(resolve => setTimeout(resolve, 200))
  }
  throw new Error(`the server at ${baseUrl} did not become healthy: ${last}`)
}

export interface RunningServer {
  baseUrl: string
  child?: ChildProcess
  stop: () => Promise<void>
}

/**
 * `port`: listen there (e.g. to restart a server where its clients will reconnect); default a free one.
 * `dir`: run the build found in `<dir>/.output`, with `dir` as the working directory (a deployment
 * somewhere else); default this checkout.
 */
export async function startBuiltServer(env: NodeJS.ProcessEnv = process.env, port?: number, dir = '.'): Promise<RunningServer> {
  if (env.BASE_URL) return { baseUrl: env.BASE_URL, stop: async () => {} }
  if (!env.DATABASE_URL) throw new Error('DATABASE_URL is not set: run the tests through `npm test`, or export it from a running database.')
  if (!existsSync(`${dir}/.output/server/index.mjs`)) throw new Error('No build in .output: run `npx nuxt build` (npm test does it for you).')
  port ??= await freePort()
  const child = spawn(process.execPath, ['.output/server/index.mjs'], {
    cwd: dir,
    env: { ...env, NITRO_PORT: String(port), NITRO_HOST: '::', NODE_ENV: 'production' },
    stdio: ['ignore', 'inherit', 'inherit'],
  })
  const baseUrl = `http://127.0.0.1:${port}`
  await waitForHealth(baseUrl)
  return {
    baseUrl,
    child,
    stop: () => new Promise<void>((resolve) => {
      if (child.exitCode !== null) return resolve()
      child.once('exit', () => resolve())
      child.kill('SIGTERM')
    }),
  }
}
