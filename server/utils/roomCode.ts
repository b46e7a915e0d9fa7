import { randomInt } from 'node:crypto'

/** Letters and digits that cannot be mistaken for one another when read off a projector. */
export const ROOM_CODE_ALPHABET = 'ABCDEFGHJKMNPQRSTUVWXYZ23456789'
export const ROOM_CODE_LENGTH = 6

/** A random room code (about 30 bits); uniqueness is left to the database's unique index. */
export function newRoomCode() {
  let code = ''
  for (let i = 0; i < ROOM_CODE_LENGTH; i++) code += ROOM_CODE_ALPHABET[randomInt(ROOM_CODE_ALPHABET.length)]
  return code
}
