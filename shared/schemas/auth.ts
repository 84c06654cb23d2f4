import { z } from 'zod';
import { RoleSchema } from './common';

export const SignInBodySchema = z
  .object({
    email: z.string().trim().min(1, 'e-mail is required').max(320),
    password: z.string().min(1, 'password is required').max(200),
  })
  .meta({ id: 'SignInBody' });
export type SignInBody = z.infer<typeof SignInBodySchema>;

export const PublicUserSchema = z
  .object({ id: z.number().int(), email: z.string(), name: z.string(), role: RoleSchema })
  .meta({ id: 'PublicUser' });
export type PublicUser = z.infer<typeof PublicUserSchema>;

export const SignInResponseSchema = z
  .object({ token: z.string(), user: PublicUserSchema })
  .meta({ id: 'SignInResponse' });
export type SignInResponse = z.infer<typeof SignInResponseSchema>;
