import QRCode from 'qrcode'
import { RoomParams } from '../../../../shared/schemas/rooms'

/** The join link as a QR code (SVG), for the big screen: scanning it opens /join with the room code filled in. */
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = validParams(event, RoomParams)
  const { room } = await requireRoomPermission(id, user.id, 'room:view')
  const url = `${publicOrigin(event)}/join?code=${encodeURIComponent(room.code)}`
  const svg = await QRCode.toString(url, { type: 'svg', errorCorrectionLevel: 'M', margin: 2, color: { dark: '#0c2829', light: '#ffffff' } })
  setResponseHeader(event, 'Content-Type', 'image/svg+xml; charset=utf-8')
  setResponseHeader(event, 'Cache-Control', 'private, max-age=300')
  return svg
})
