import { Model } from 'objection';

export class ApiToken extends Model {
  static tableName = 'api_tokens';

  id!: number;
  user_id!: number;
  name!: string;
  token_hash!: string;
  prefix!: string;
  expires_at!: Date | null;
  last_used_at!: Date | null;
  revoked_at!: Date | null;
  created_at!: Date;
}
