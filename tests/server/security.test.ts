/**
 * Security headers and request limits as the built server sends them (nuxt-security, configured
 * in nuxt.config.ts): a strict content security policy with a fresh nonce per page, no framing,
 * no sniffing, and bodies above the limits refused before any route reads them.
 */
import { describe, expect, inject, it } from 'vitest'

const baseUrl = () => inject('baseUrl')

function directives(header: string | null) {
  const map = new Map<string, string[]>()
  for (const part of (header ?? '').split(';')) {
    const [name, ...values] = part.trim().split(/\s+/)
    if (name) map.set(name, values)
  }
  return map
}

describe('security headers', () => {
  it('pages carry a strict content security policy with a nonce that changes per response', async () => {
    const first = await fetch(`${baseUrl()}/sign-in`)
    const second = await fetch(`${baseUrl()}/sign-in`)
    expect(first.status).toBe(200)
    const csp = directives(first.headers.get('content-security-policy'))
    const scripts = csp.get('script-src') ?? []
    expect(scripts).toContain('\'strict-dynamic\'')
    expect(scripts).not.toContain('\'unsafe-inline\'')
    expect(scripts).not.toContain('\'unsafe-eval\'')
    const nonce = scripts.find(s => s.startsWith('\'nonce-'))
    expect(nonce).toMatch(/^'nonce-[\w+/=-]{16,}'$/)
    expect(directives(second.headers.get('content-security-policy')).get('script-src')).not.toContain(nonce)
    expect(csp.get('object-src')).toEqual(['\'none\''])
    expect(csp.get('frame-ancestors')).toEqual(['\'none\''])
    expect(csp.get('base-uri')).toEqual(['\'none\''])
    expect(csp.get('connect-src')).toEqual(['\'self\''])
    // Isolation headers go with documents (nuxt-security sends them for pages, not for API answers).
    expect(first.headers.get('cross-origin-opener-policy')).toBe('same-origin')
    expect(first.headers.get('x-frame-options')).toBe('DENY')
    // The page's own scripts carry that nonce.
    const html = await first.text()
    const value = nonce!.slice('\'nonce-'.length, -1)
    expect(html).toContain(`nonce="${value}"`)
  })

  it('answers with the usual protective headers and without advertising the server', async () => {
    const answer = await fetch(`${baseUrl()}/api/health`)
    expect(answer.headers.get('x-frame-options')).toBe('DENY')
    expect(answer.headers.get('x-content-type-options')).toBe('nosniff')
    expect(answer.headers.get('referrer-policy')).toBe('same-origin')
    expect(answer.headers.get('x-powered-by')).toBeNull()
  })
})

describe('request limits', () => {
  it('refuses a JSON body over 4 MB with 413 before the route reads it', async () => {
    const body = JSON.stringify({ email: 'x@example.com', password: 'p'.repeat(4_100_000) })
    const answer = await fetch(`${baseUrl()}/api/auth/sign-in`, { method: 'POST', headers: { 'content-type': 'application/json' }, body })
    expect(answer.status).toBe(413)
  })
})

describe('error answers', () => {
  // Reason phrases as RFC 9110 §15 names them (Node's http.STATUS_CODES gives the same).
  it('name the status in words that match its code, and keep the route\'s own message', async () => {
    const notFound = await fetch(`${baseUrl()}/api/rooms/00000000-0000-4000-8000-000000000000/ledger`)
    expect(notFound.status).toBe(401)
    expect(await notFound.json()).toMatchObject({ statusCode: 401, statusMessage: 'Unauthorized' })
    const badSignIn = await fetch(`${baseUrl()}/api/auth/sign-in`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"email":"not an address"}' })
    expect(badSignIn.status).toBe(400)
    const body = await badSignIn.json() as { statusMessage: string, message: string }
    expect(body.statusMessage).toBe('Bad Request')
    expect(body.message).not.toBe('Bad Request')
    expect(body.message.length).toBeGreaterThan(0)
  })
})
