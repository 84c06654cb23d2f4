import { Model } from 'objection';

export class OutboxMessage extends Model {
  static tableName = 'outbox_messages';

  id!: number;
  received_at!: Date;
  from_address!: string;
  to_address!: string;
  subject!: string;
  text!: string;
  html!: string | null;
}
