import type { H3Event } from 'h3'

/**
 * The public minutes check reads up to 20 MB and verifies a signature for anyone, signed in or not:
 * each address gets COUNTERPOISE_CHECK_LIMIT checks (60) per ten minutes, counted in this process
 * (a sliding window; two app processes each count their own). A person checking a few files never
 * meets it; a script feeding the server files does.
 */
const WINDOW_MS = 10 * 60_000
const checkLimit = () => Number(process.env.COUNTERPOISE_CHECK_LIMIT || 60)
const recent = new Map<string, number[]>()

export function assertCheckAllowed(event: H3Event, now = Date.now()) {
  // Forget windows that have run out, so the map cannot grow with one-off addresses.
  if (recent.size > 10_000) {
    for (const [address, times] of recent) if (times[times.length - 1]! <= now - WINDOW_MS) recent.delete(address)
  }
  const address = clientAddress(event)
  const times = (recent.get(address) ?? []).filter(at => at > now - WINDOW_MS)
  if (times.length >= checkLimit()) {
    recent.set(address, times)
    setResponseHeader(event, 'Retry-After', Math.ceil((times[0]! + WINDOW_MS - now) / 1000))
    throw createError({ statusCode: 429, message: `Too many minutes checked from this address. Wait ${Math.ceil((times[0]! + WINDOW_MS - now) / 60_000)} minutes and try again.` })
  }
  times.push(now)
  recent.set(address, times)
}
