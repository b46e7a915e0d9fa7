/** Weighing rounds: their states and how stakeholders give their weights. */
export const WEIGHING_STATUSES = ['open', 'closed', 'revealed'] as const
export type WeighingStatus = (typeof WEIGHING_STATUSES)[number]

/**
 * 'aspirations' is reference-point mode: each stakeholder sets a target level per criterion and
 * the achievement function (see shared/utils/aspirations.ts) names the efficient alternative
 * closest to it, which may be one that no weighting of sliders ever favours.
 */
export const INPUT_STYLES = ['sliders', 'ranking', 'aspirations'] as const
export type InputStyle = (typeof INPUT_STYLES)[number]

export const INPUT_STYLE_LABELS: Readonly<Record<InputStyle, string>> = {
  sliders: 'Sliders',
  ranking: 'Ranking',
  aspirations: 'Targets',
}

export const WEIGHING_STATUS_LABELS: Readonly<Record<WeighingStatus, string>> = {
  open: 'Open',
  closed: 'Closed',
  revealed: 'Revealed',
}
