import { Model, type StaticHookArguments } from 'objection';
import { usersChanged } from '../auth/userCache';
import type { Role } from '../../shared/schemas/common';

export class User extends Model {
  static tableName = 'users';

  id!: number;
  email!: string;
  name!: string;
  password_hash!: string | null;
  role!: Role;
  active!: boolean;
  sessions_valid_after!: Date;
  last_sign_in_at!: Date | null;
  created_at!: Date;
  updated_at!: Date;

  // Signed-in users are kept in memory per process (server/auth/userCache.ts): a change drops them here at once; a
  // database trigger tells the other processes.
  static afterUpdate({ transaction }: StaticHookArguments<User>) {
    usersChanged(transaction);
  }

  static afterDelete({ transaction }: StaticHookArguments<User>) {
    usersChanged(transaction);
  }

  $beforeUpdate() {
    this.updated_at = new Date();
  }

  /** The public view of a user: never the password hash. */
  toPublic() {
    return { id: this.id, email: this.email, name: this.name, role: this.role };
  }
}
