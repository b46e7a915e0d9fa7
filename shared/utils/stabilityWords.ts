import { joinWords } from '../statusVocabulary'
import type { Favourite, LedgerAnalysis } from '../types/engine'
import { innerPercentBounds } from './percentages'
import { weightStability } from './stability'

/**
 * One sentence on how firmly a favourite holds as criterion k's weight moves (the others keeping
 * their proportions, as the sliders do): "Your favourite stays the same while Capital cost is
 * between 18% and 41%" with who takes over beyond each end. `subject` names whose favourite it
 * is ("Your favourite", "The group's favourite"). Empty when there is nothing to say (no
 * favourite, one criterion).
 */
export function stabilitySentence(
  analysis: LedgerAnalysis,
  favourite: Favourite,
  k: number,
  nameOf: (id: string) => string,
  subject = 'Your favourite',
): string {
  const criterion = analysis.criteria[k]
  if (!criterion || favourite.winners.length === 0 || analysis.criteria.length < 2) return ''
  if (favourite.winners.length > 1) {
    return `${joinWords(favourite.winners.map(nameOf))} are level at these weights: a small change to any weight can decide between them.`
  }
  if (favourite.runnersUp.length === 0) return `${nameOf(favourite.winners[0]!)} is the only alternative on the shortlist, whatever the weights.`
  let interval
  try {
    interval = weightStability(analysis, favourite.weights, favourite.winners[0])?.intervals[k]
  }
  catch {
    return ''
  }
  if (!interval) return ''
  const name = criterion.name
  const { low, high } = innerPercentBounds(interval.lowest, interval.highest)
  const below = interval.takenOverBelow && nameOf(interval.takenOverBelow)
  const above = interval.takenOverAbove && nameOf(interval.takenOverAbove)
  if (!below && !above) return `${subject} stays the same whatever weight ${name} has.`
  if (low > high) return `${subject} is close to a tie: a change of 1% in ${name} can change it.`
  if (!below) return `${subject} stays the same while ${name} is at most ${high}%; above that, ${above} takes over.`
  if (!above) return `${subject} stays the same while ${name} is at least ${low}%; below that, ${below} takes over.`
  return `${subject} stays the same while ${name} is between ${low}% and ${high}% (below: ${below}; above: ${above}).`
}
