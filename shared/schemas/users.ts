import { z } from 'zod';
import { RoleSchema } from './common';

/** Passwords: at least this long (the same rule as LOADLINE_ADMIN_PASSWORD). */
export const PASSWORD_MIN_LENGTH = 10;
/** The client page that invitation and reset links open: `${PUBLIC_URL}${SET_PASSWORD_PATH}?token=…`. */
export const SET_PASSWORD_PATH = '/set-password';

const EmailSchema = z.string().trim().max(320).pipe(z.email('must be an e-mail address'));
const NameSchema = z.string().trim().min(1, 'name is required').max(200);
const NewPasswordSchema = z
  .string()
  .min(PASSWORD_MIN_LENGTH, `must have at least ${PASSWORD_MIN_LENGTH} characters`)
  .max(200, 'must have at most 200 characters');

/** invited: no password set yet; deactivated: cannot sign in, tokens dead. */
export const UserStatusSchema = z.enum(['active', 'invited', 'deactivated']).meta({ id: 'UserStatus' });

export const UserSummarySchema = z
  .object({
    id: z.number().int(),
    email: z.string(),
    name: z.string(),
    role: RoleSchema,
    active: z.boolean(),
    status: UserStatusSchema,
    lastSignInAt: z.string().nullable().meta({ description: 'ISO date-time' }),
    createdAt: z.string(),
    updatedAt: z.string(),
  })
  .meta({ id: 'UserSummary' });
export type UserSummary = z.infer<typeof UserSummarySchema>;

export const UserListSchema = z.object({ items: z.array(UserSummarySchema) }).meta({ id: 'UserList' });
export type UserList = z.infer<typeof UserListSchema>;

export const InviteUserBodySchema = z
  .object({ email: EmailSchema, name: NameSchema, role: RoleSchema })
  .meta({ id: 'InviteUserBody' });
export type InviteUserBody = z.infer<typeof InviteUserBodySchema>;

export const UpdateUserBodySchema = z
  .object({
    name: NameSchema.optional(),
    role: RoleSchema.optional(),
    active: z.boolean().optional().meta({ description: 'false deactivates (sessions and API tokens stop at once)' }),
  })
  .refine((b) => b.name !== undefined || b.role !== undefined || b.active !== undefined, { message: 'give name, role or active', path: ['role'] })
  .meta({ id: 'UpdateUserBody' });
export type UpdateUserBody = z.infer<typeof UpdateUserBodySchema>;

export const PasswordResetRequestBodySchema = z.object({ email: EmailSchema }).meta({ id: 'PasswordResetRequestBody' });
export type PasswordResetRequestBody = z.infer<typeof PasswordResetRequestBodySchema>;

export const PasswordLinkBodySchema = z
  .object({ token: z.string().min(1, 'token is required').max(200) })
  .meta({ id: 'PasswordLinkBody' });
export type PasswordLinkBody = z.infer<typeof PasswordLinkBodySchema>;

export const PasswordLinkPurposeSchema = z.enum(['invitation', 'reset']).meta({ id: 'PasswordLinkPurpose' });
export type PasswordLinkPurpose = z.infer<typeof PasswordLinkPurposeSchema>;

export const PasswordLinkInfoSchema = z
  .object({ purpose: PasswordLinkPurposeSchema, email: z.string(), name: z.string(), expiresAt: z.string() })
  .meta({ id: 'PasswordLinkInfo' });
export type PasswordLinkInfo = z.infer<typeof PasswordLinkInfoSchema>;

export const SetPasswordBodySchema = z
  .object({ token: z.string().min(1, 'token is required').max(200), password: NewPasswordSchema })
  .meta({ id: 'SetPasswordBody' });
export type SetPasswordBody = z.infer<typeof SetPasswordBodySchema>;

export const SetPasswordResponseSchema = z
  .object({ ok: z.literal(true), email: z.string() })
  .meta({ id: 'SetPasswordResponse' });

export const ChangePasswordBodySchema = z
  .object({ currentPassword: z.string().min(1, 'current password is required').max(200), newPassword: NewPasswordSchema })
  .meta({ id: 'ChangePasswordBody' });
export type ChangePasswordBody = z.infer<typeof ChangePasswordBodySchema>;
