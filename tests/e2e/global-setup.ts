import type { FullConfig } from '@playwright/test'
import { startBuiltServer } from '../support/server'

/** Use BASE_URL when npm test already runs the server; otherwise start the build for this run. */
export default async function globalSetup(_config: FullConfig) {
  const server = await startBuiltServer()
  process.env.BASE_URL = server.baseUrl
  return server.stop
}
