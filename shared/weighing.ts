/** Weighing rounds: their states and how stakeholders give their weights. */
export const WEIGHING_STATUSES = ['open', 'closed', 'revealed'] as const
export type WeighingStatus = (typeof WEIGHING_STATUSES)[number]

export const INPUT_STYLES = ['sliders', 'ranking'] as const
export type InputStyle = (typeof INPUT_STYLES)[number]

export const WEIGHING_STATUS_LABELS: Readonly<Record<WeighingStatus, string>> = {
  open: 'Open',
  closed: 'Closed',
  revealed: 'Revealed',
}
