import { and, eq, gt, lt, or, sql } from 'drizzle-orm'
import type { H3Event } from 'h3'
import { signInFailures } from '../database/schema'

const WINDOW_MINUTES = 15
const limits = () => ({
  perAccount: Number(process.env.COUNTERPOISE_SIGNIN_LIMIT_ACCOUNT || 5),
  perAddress: Number(process.env.COUNTERPOISE_SIGNIN_LIMIT_ADDRESS || 30),
})

export function clientAddress(event: H3Event) {
  return getRequestIP(event) ?? 'unknown'
}

/** 429 when this address or this account has failed too often in the last window. */
export async function assertSignInAllowed(event: H3Event, email: string) {
  const since = sql`now() - make_interval(mins => ${WINDOW_MINUTES})`
  const ip = clientAddress(event)
  const [counts] = await useDb()
    .select({
      byAddress: sql<number>`count(*) filter (where ${signInFailures.ip} = ${ip})`.mapWith(Number),
      byAccount: sql<number>`count(*) filter (where ${signInFailures.email} = ${email.toLowerCase()})`.mapWith(Number),
    })
    .from(signInFailures)
    .where(and(gt(signInFailures.at, since), or(eq(signInFailures.ip, ip), eq(signInFailures.email, email.toLowerCase()))))
  const { perAccount, perAddress } = limits()
  if ((counts?.byAddress ?? 0) >= perAddress || (counts?.byAccount ?? 0) >= perAccount) {
    setResponseHeader(event, 'Retry-After', WINDOW_MINUTES * 60)
    throw createError({ statusCode: 429, message: `Too many failed sign-ins. Wait ${WINDOW_MINUTES} minutes and try again.` })
  }
}

export async function recordSignInFailure(event: H3Event, email: string) {
  const db = useDb()
  await db.insert(signInFailures).values({ ip: clientAddress(event), email: email.toLowerCase() })
  await db.delete(signInFailures).where(lt(signInFailures.at, sql`now() - interval '1 day'`))
}

/** A successful sign-in forgives that account's recent failures (not the address's). */
export async function clearSignInFailures(email: string) {
  await useDb().delete(signInFailures).where(eq(signInFailures.email, email.toLowerCase()))
}
