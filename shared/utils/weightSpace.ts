/**
 * The plain-data side of the weight-space view (triangle, acceptability, compromise) for one
 * revealed weighing: which three criteria sit at the triangle's corners (each weighting's place on
 * it is `placeOnMap` in weightMap.ts), and a seed that makes the round's acceptability figures reproducible.
 */
/** A 32-bit seed from a text (FNV-1a, 32-bit), so the analysis of one round always draws the same weights. */
export function seedFromText(text: string): number {
  let hash = 0x811C9DC5
  for (let i = 0; i < text.length; i++) {
    hash ^= text.charCodeAt(i)
    hash = Math.imul(hash, 0x01000193) >>> 0
  }
  return hash >>> 0
}

/** How many weightings a revealed round's acceptability figures draw. */
export const ROUND_ACCEPTABILITY_SAMPLES = 10_000

/** The draws behind a revealed round's acceptability figures: how many, and the seed. */
export interface RoundAcceptabilityDraws {
  samples: number
  seed: number
}

/**
 * The draws for the acceptability figures of the weighing `weighingId`, as the weight-space view
 * makes them and the minutes record them: the seed comes from the weighing's id, so anyone with the
 * round's option table and weightings can draw the same figures again.
 */
export function roundAcceptabilityDraws(weighingId: string): RoundAcceptabilityDraws {
  return { samples: ROUND_ACCEPTABILITY_SAMPLES, seed: seedFromText(weighingId) }
}

/** The minutes' line for a round's draws: "Acceptability figures: 10,000 random weightings, seed 1234567890". */
export function acceptabilityDrawsLine(draws: RoundAcceptabilityDraws): string {
  return `Acceptability figures: ${draws.samples.toLocaleString('en-GB')} random weighting${draws.samples === 1 ? '' : 's'}, seed ${draws.seed}`
}

/**
 * The three criteria for the triangle's corners: all of them when there are three; otherwise the
 * three with the largest weights in `weights` (ties: criterion order), kept in criterion order.
 * Null with fewer than three criteria.
 */
export function defaultCorners(criterionIds: readonly string[], weights: readonly number[] | null): [string, string, string] | null {
  if (criterionIds.length < 3) return null
  const order = criterionIds.map((id, k) => ({ id, k, w: weights?.[k] ?? 0 }))
    .sort((a, b) => b.w - a.w || a.k - b.k)
    .slice(0, 3)
    .sort((a, b) => a.k - b.k)
  return [order[0]!.id, order[1]!.id, order[2]!.id]
}
