import { Model } from 'objection';
import type { PasswordLinkPurpose } from '../../shared/schemas/users';

export class PasswordLink extends Model {
  static tableName = 'password_links';

  id!: number;
  user_id!: number;
  purpose!: PasswordLinkPurpose;
  token_hash!: string;
  expires_at!: Date;
  used_at!: Date | null;
  created_at!: Date;
}
