import { z } from 'zod'
import { DIRECTIONS } from '../types/decision'
import { multiLine, singleLine } from './text'

export const MAX_CRITERIA = 30
export const MAX_ALTERNATIVES = 20_000

/** Ids are made by the client (criterion ids key the scores), so they are checked, not trusted. */
const LedgerId = z.string({ error: 'Missing id.' }).regex(/^[\w-]{1,64}$/, { error: 'Ids use letters, digits, - and _ only (at most 64).' })

const limit = z.number({ error: 'A limit must be a number.' }).finite({ error: 'A limit must be a finite number.' }).nullable().optional()

export const CriterionInput = z.object({
  id: LedgerId,
  name: singleLine(z.string({ error: 'Name the criterion.' }).trim().min(1, { error: 'Name the criterion.' }).max(80, { error: 'Keep criterion names under 80 characters.' }), 'A criterion name'),
  unit: singleLine(z.string().trim().max(24, { error: 'Keep the unit under 24 characters.' }), 'A unit').default(''),
  direction: z.enum(DIRECTIONS, { error: 'Say whether lower or higher is better.' }),
  lowest: limit,
  highest: limit,
  precision: z.number().int().min(0, { error: 'Precision is 0 to 6 decimal places.' }).max(6, { error: 'Precision is 0 to 6 decimal places.' }).nullable().optional(),
  description: multiLine(z.string().trim().max(500, { error: 'Keep the description under 500 characters.' }), 'A description').nullable().optional(),
}).refine(c => c.lowest == null || c.highest == null || c.lowest <= c.highest, {
  error: 'The lowest acceptable value is above the highest.',
  path: ['lowest'],
})
export type CriterionInput = z.infer<typeof CriterionInput>

export const AlternativeInput = z.object({
  id: LedgerId,
  name: singleLine(z.string({ error: 'Name the alternative.' }).trim().min(1, { error: 'Name the alternative.' }).max(120, { error: 'Keep alternative names under 120 characters.' }), 'An alternative\'s name'),
  scores: z.record(z.string(), z.number({ error: 'Scores must be numbers.' }).finite({ error: 'Scores must be finite numbers.' })),
})
export type AlternativeInput = z.infer<typeof AlternativeInput>

export const LedgerBody = z.object({
  /** The version the editor started from: a save on top of a newer version is refused (409). */
  baseVersion: z.number().int().min(0),
  criteria: z.array(CriterionInput).min(1, { error: 'Add at least one criterion.' }).max(MAX_CRITERIA, { error: `At most ${MAX_CRITERIA} criteria.` }),
  alternatives: z.array(AlternativeInput).max(MAX_ALTERNATIVES, { error: `At most ${MAX_ALTERNATIVES} alternatives.` }),
  note: multiLine(z.string().trim().max(200), 'The note').optional(),
})
export type LedgerBody = z.infer<typeof LedgerBody>
