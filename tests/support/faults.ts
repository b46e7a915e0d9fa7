/**
 * What the fault tests (tests/server/crash.test.ts, failover.test.ts) share: their small ledger,
 * random slider positions, waiting helpers, and their size. npm test runs a handful of phones;
 * `npm run bench:faults` sets COUNTERPOISE_FAULT_PHONES (200).
 */
export const criteria = [
  { id: 'cost', name: 'Cost', unit: '£k', direction: 'min' as const },
  { id: 'reach', name: 'Reach', unit: 'people', direction: 'max' as const },
  { id: 'delay', name: 'Delay', unit: 'weeks', direction: 'min' as const },
]
export const alternatives = [
  { id: 'lean', name: 'Lean plan', scores: { cost: 10, reach: 100, delay: 10 } },
  { id: 'broad', name: 'Broad plan', scores: { cost: 50, reach: 900, delay: 12 } },
  { id: 'quick', name: 'Quick plan', scores: { cost: 40, reach: 300, delay: 2 } },
]

/** Random slider positions, the first never zero (so the weights never all are). */
export const sliders = () => criteria.map((_, k) => k === 0 ? 1 + Math.floor(Math.random() * 100) : Math.floor(Math.random() * 101))

export const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

/** Poll `test` every 25 ms; false when `ms` pass first. */
export async function until(test: () => boolean, ms: number) {
  const deadline = Date.now() + ms
  while (!test()) {
    if (Date.now() > deadline) return false
    await sleep(25)
  }
  return true
}

/**
 * The number of phones (COUNTERPOISE_FAULT_PHONES, else `usual`), and waits that grow with it:
 * 200 phones sign up, connect and resend far more than a handful.
 */
export function faultSize(usual: number) {
  const phones = Number(process.env.COUNTERPOISE_FAULT_PHONES || usual)
  return { phones, scaled: (ms: number, perPhone: number) => ms + perPhone * Math.max(0, phones - usual) }
}
