import type { UserSummary } from '@shared/schemas/users';
import { StatusBadge } from '../../components/StatusBadge';

const LOOK = { active: { tone: 'ok', label: 'Active' }, invited: { tone: 'info', label: 'Invited' }, deactivated: { tone: 'neutral', label: 'Deactivated' } } as const;

export function UserStatusBadge({ status }: { status: UserSummary['status'] }) {
  const look = LOOK[status];
  return <StatusBadge tone={look.tone}>{look.label}</StatusBadge>;
}

export const USER_STATUS_LABEL = (status: UserSummary['status']) => LOOK[status].label;
