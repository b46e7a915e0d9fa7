import { z } from 'zod'
import { singleLine } from './text'

export const PASSWORD_MIN_LENGTH = 10

const email = z.string({ error: 'Enter your e-mail address.' })
  .trim()
  .min(1, { error: 'Enter your e-mail address.' })
  .max(254, { error: 'That e-mail address is too long.' })
  .pipe(z.email({ error: 'That does not look like an e-mail address.' }))

const newPassword = z.string({ error: 'Choose a password.' })
  .min(PASSWORD_MIN_LENGTH, { error: `Use at least ${PASSWORD_MIN_LENGTH} characters.` })
  .max(200, { error: 'Keep the password under 200 characters.' })

export const SignUpBody = z.object({
  displayName: singleLine(z.string({ error: 'Enter your name.' }).trim().min(1, { error: 'Enter your name.' }).max(80, { error: 'Keep the name under 80 characters.' }), 'Your name'),
  email,
  password: newPassword,
})
export type SignUpBody = z.infer<typeof SignUpBody>

export const SignInBody = z.object({
  email,
  password: z.string({ error: 'Enter your password.' }).min(1, { error: 'Enter your password.' }).max(200, { error: 'Wrong e-mail address or password.' }),
})
export type SignInBody = z.infer<typeof SignInBody>

export const ChangePasswordBody = z.object({
  currentPassword: z.string({ error: 'Enter your current password.' }).min(1, { error: 'Enter your current password.' }).max(200, { error: 'The current password is not right.' }),
  newPassword,
}).refine(body => body.newPassword !== body.currentPassword, { path: ['newPassword'], error: 'Choose a password different from the current one.' })
export type ChangePasswordBody = z.infer<typeof ChangePasswordBody>
