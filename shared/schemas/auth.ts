import { z } from 'zod'
import { storable } from './text'

export const emailSchema = storable(
  z
    .string({ required_error: 'Enter an e-mail address' })
    .trim()
    .toLowerCase()
    .min(1, 'Enter an e-mail address')
    .max(254, 'An e-mail address has at most 254 characters')
    .email('Enter a valid e-mail address'),
)

/** POST /api/auth/login */
export const loginSchema = z.object({
  email: emailSchema,
  password: storable(z.string({ required_error: 'Enter your password' }).min(1, 'Enter your password').max(200)),
})
export type LoginBody = z.infer<typeof loginSchema>

/** A new password. (A lone surrogate would be hashed as U+FFFD, so it is refused.) */
export const passwordSchema = storable(
  z
    .string({ required_error: 'Choose a password' })
    .min(10, 'A password has at least 10 characters')
    .max(200, 'A password has at most 200 characters'),
)

/** A new password typed twice: the body of both routes that set one, and their form (app/components/account/NewPasswordForm.vue). */
export const newPasswordSchema = z
  .object({ password: passwordSchema, confirm: z.string().max(200) })
  .refine((body) => body.password === body.confirm, {
    message: 'The two passwords differ',
    path: ['confirm'],
  })
export type NewPasswordBody = z.infer<typeof newPasswordSchema>

/** POST /api/invitations/[token] */
export const acceptInvitationSchema = newPasswordSchema
export type AcceptInvitationBody = NewPasswordBody

/** POST /api/auth/reset-request: the address to send a reset link to (the answer is the same whether it has an account). */
export const resetRequestSchema = z.object({ email: emailSchema })
export type ResetRequestBody = z.infer<typeof resetRequestSchema>

/** POST /api/auth/reset/[token] */
export const resetPasswordSchema = newPasswordSchema
