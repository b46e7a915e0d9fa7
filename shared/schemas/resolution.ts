import { z } from 'zod'
import { multiLine } from './text'
import { BALLOT_CHOICES } from '../types/resolution'

/** The most alternatives one ballot can hold: every one is a row of three buttons on a phone. */
export const MAX_SHORTLIST = 30

const AlternativeId = z.string({ error: 'Name an alternative by its id.' }).regex(/^[\w-]{1,64}$/, { error: 'That is not an alternative id.' })

/** Open the final vote. Without a shortlist, the ballot holds the efficient alternatives of the current ledger version. */
export const OpenVoteBody = z.object({
  shortlist: z.array(AlternativeId)
    .min(1, { error: 'Put at least one alternative on the ballot.' })
    .max(MAX_SHORTLIST, { error: `A ballot holds at most ${MAX_SHORTLIST} alternatives.` })
    .refine(ids => new Set(ids).size === ids.length, { error: 'The shortlist names an alternative twice.' })
    .optional(),
})
export type OpenVoteBody = z.infer<typeof OpenVoteBody>

export const VoteParams = z.object({
  id: z.uuid(),
  voteId: z.uuid(),
})

const Choices = z.record(
  AlternativeId,
  z.enum(BALLOT_CHOICES, { error: 'Each choice is approve, object or abstain.' }),
  { error: 'Send a choice for every alternative on the ballot.' },
)

/** A ballot over HTTP (the room and vote come from the path). The idempotency key is made by the phone, once per ballot. */
export const CastBallotHttpBody = z.object({
  idempotencyKey: z.string({ error: 'Missing ballot key.' }).min(8, { error: 'Missing ballot key.' }).max(80, { error: 'Ballot key too long.' }).regex(/^[\x21-\x7E]+$/, { error: 'A ballot key is printable ASCII without spaces.' }),
  choices: Choices,
})
export type CastBallotHttpBody = z.infer<typeof CastBallotHttpBody>

/** A ballot over the socket. */
export const CastBallotBody = CastBallotHttpBody.extend({
  roomId: z.uuid({ error: 'Unknown room.' }),
  voteId: z.uuid({ error: 'Unknown vote.' }),
})
export type CastBallotBody = z.infer<typeof CastBallotBody>

const text = (max: number, what: string) => multiLine(z.string({ error: `${what} must be text.` }).trim().max(max, { error: `Keep the ${what.toLowerCase()} under ${max} characters.` }), what)

/** The decision as the facilitator records it. */
export const RecordResolutionBody = z.object({
  /** Ledger version number; the current one when absent. */
  ledgerVersion: z.number({ error: 'The ledger version is a number.' }).int({ error: 'The ledger version is a whole number.' }).min(1, { error: 'The ledger version is a whole number from 1.' }).optional(),
  alternativeId: AlternativeId,
  rationale: text(5000, 'Rationale').min(1, { error: 'Say why the room chose this alternative.' }),
  conditions: text(5000, 'Conditions').default(''),
  dissent: text(5000, 'Dissent').default(''),
  /** Required when the engine found the chosen alternative dominated or outside limits. */
  justification: text(5000, 'Justification').nullable().optional(),
  /** The frozen (signed) record this one corrects. */
  amends: z.uuid({ error: 'That is not a resolution id.' }).nullable().optional(),
})
export type RecordResolutionBody = z.infer<typeof RecordResolutionBody>

/** A change to a recorded resolution that is not yet frozen: only the fields sent change. */
export const EditResolutionBody = z.object({
  alternativeId: AlternativeId.optional(),
  rationale: text(5000, 'Rationale').min(1, { error: 'Say why the room chose this alternative.' }).optional(),
  conditions: text(5000, 'Conditions').optional(),
  dissent: text(5000, 'Dissent').optional(),
  justification: text(5000, 'Justification').nullable().optional(),
}).refine(b => Object.values(b).some(v => v !== undefined), { error: 'Nothing to change.' })
export type EditResolutionBody = z.infer<typeof EditResolutionBody>

export const ResolutionParams = z.object({
  id: z.uuid(),
  resolutionId: z.uuid(),
})
