import type { RoomStatus } from './roles'

/** The stage strip across a room: where the meeting is. */
export const STAGES = ['prepare', 'weigh', 'decide', 'record'] as const
export type Stage = (typeof STAGES)[number]

export const STAGE_LABELS: Readonly<Record<Stage, string>> = {
  prepare: 'Prepare',
  weigh: 'Weigh',
  decide: 'Decide',
  record: 'Record',
}

const STAGE_OF_STATUS: Readonly<Record<RoomStatus, Stage>> = {
  draft: 'prepare',
  live: 'weigh',
  decided: 'record',
  archived: 'record',
}

/** The stage a room in this status is at. */
export function stageOf(status: RoomStatus): Stage {
  return STAGE_OF_STATUS[status]
}

export const STATUS_LABELS: Readonly<Record<RoomStatus, string>> = {
  draft: 'Preparing',
  live: 'In session',
  decided: 'Decided',
  archived: 'Archived',
}
