import { z } from 'zod'
import { INPUT_STYLES } from '../weighing'

export const OpenWeighingBody = z.object({
  inputStyle: z.enum(INPUT_STYLES, { error: 'Choose sliders, ranking or targets.' }).default('sliders'),
  showNames: z.boolean().default(false),
  /** Optional time limit in minutes. */
  minutes: z.number().int().min(1, { error: 'A time limit is 1 to 240 minutes.' }).max(240, { error: 'A time limit is 1 to 240 minutes.' }).nullable().optional(),
})
export type OpenWeighingBody = z.infer<typeof OpenWeighingBody>

export const WeighingParams = z.object({
  id: z.uuid(),
  weighingId: z.uuid(),
})

/** Criterion ids, most important first; criteria in a nested array share a rank. */
export const Ranking = z.array(z.union([z.string().min(1).max(64), z.array(z.string().min(1).max(64)).min(1)])).min(1).max(30)

/**
 * A stakeholder's submission. Either weights (in the criterion order of the weighing's ledger
 * version, any non-negative scale: they are normalised), a ranking turned into weights by the
 * rank-order centroid, or targets (aspiration levels) for a weighing in reference-point mode. The idempotency key is made by the phone, once per submission.
 */
export const SubmitWeightsBody = z.object({
  roomId: z.uuid({ error: 'Unknown room.' }),
  weighingId: z.uuid({ error: 'Unknown weighing.' }),
  idempotencyKey: z.string().min(8, { error: 'Missing submission key.' }).max(80, { error: 'Submission key too long.' }).regex(/^[\x21-\x7E]+$/, { error: 'A submission key is printable ASCII without spaces.' }),
  weights: z.array(z.number({ error: 'Weights must be numbers.' }).finite({ error: 'Weights must be finite numbers.' }).min(0, { error: 'Weights cannot be negative.' })).min(1).max(30).optional(),
  ranking: Ranking.optional(),
  /**
   * For a weighing in reference-point mode ('aspirations'): a target level per criterion, in its
   * own unit and the criterion order; checked against the shortlist's range by the server.
   */
  aspirations: z.array(z.number({ error: 'Targets must be numbers.' }).finite({ error: 'Targets must be finite numbers.' })).min(1).max(30).optional(),
}).refine(b => [b.weights, b.ranking, b.aspirations].filter(x => x !== undefined).length === 1, { error: 'Send either weights, a ranking or targets.' })
export type SubmitWeightsBody = z.infer<typeof SubmitWeightsBody>

export const JoinRoomBody = z.object({ roomId: z.uuid({ error: 'Unknown room.' }) })
