import type { TestProject } from 'vitest/node'
import { startBuiltServer } from './server'

declare module 'vitest' {
  export interface ProvidedContext {
    baseUrl: string
  }
}

export default async function setup(project: TestProject) {
  const server = await startBuiltServer()
  project.provide('baseUrl', server.baseUrl)
  return server.stop
}
