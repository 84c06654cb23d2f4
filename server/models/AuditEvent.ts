import { Model } from 'objection';

export class AuditEvent extends Model {
  static tableName = 'audit_events';

  id!: number;
  at!: Date;
  actor_id!: number | null;
  actor_email!: string | null;
  action!: string;
  object_type!: string | null;
  object_id!: string | null;
  ip!: string | null;
  details!: Record<string, unknown>;
}
