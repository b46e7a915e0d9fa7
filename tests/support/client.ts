/** A cookie-keeping HTTP client for server tests: one per simulated person. */
import { randomUUID } from 'node:crypto'

export interface Answer<T = any> {
  status: number
  body: T
  headers: Headers
}

export class Client {
  cookie = ''
  constructor(readonly baseUrl: string) {}

  async request<T = any>(method: string, path: string, body?: unknown, base = this.baseUrl): Promise<Answer<T>> {
    const headers: Record<string, string> = { accept: 'application/json' }
    if (body !== undefined) headers['content-type'] = 'application/json'
    if (this.cookie) headers.cookie = this.cookie
    const answer = await fetch(`${base}${path}`, { method, headers, body: body === undefined ? undefined : JSON.stringify(body), redirect: 'manual' })
    const setCookie = answer.headers.getSetCookie()
    if (setCookie.length) this.cookie = setCookie.map(c => c.split(';')[0]).join('; ')
    const text = await answer.text()
    let parsed: unknown = text
    try {
      parsed = text ? JSON.parse(text) : null
    }
    catch { /* not JSON: keep the text */ }
    return { status: answer.status, body: parsed as T, headers: answer.headers }
  }

  get<T = any>(path: string) { return this.request<T>('GET', path) }
  post<T = any>(path: string, body?: unknown) { return this.request<T>('POST', path, body ?? {}) }
  patch<T = any>(path: string, body?: unknown) { return this.request<T>('PATCH', path, body ?? {}) }
  put<T = any>(path: string, body?: unknown) { return this.request<T>('PUT', path, body ?? {}) }
}

export const uniqueEmail = (label: string) => `${label}-${randomUUID().slice(0, 8)}@test.counterpoise.example`

export const TEST_PASSWORD = 'correct-horse-battery'

/** A new account, signed in. */
export async function newPerson(baseUrl: string, label = 'person') {
  const client = new Client(baseUrl)
  const email = uniqueEmail(label)
  const answer = await client.post('/api/auth/sign-up', { displayName: `Test ${label}`, email, password: TEST_PASSWORD })
  if (answer.status !== 201) throw new Error(`sign-up failed: ${answer.status} ${JSON.stringify(answer.body)}`)
  return { client, email, user: answer.body as { id: string, email: string, displayName: string, siteRole: string } }
}
