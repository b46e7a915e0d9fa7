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
