import { useEffect, useState } from 'react';
import { ROLES, ROLE_LABELS, type Role } from '@shared/schemas/common';
import type { UserSummary } from '@shared/schemas/users';
import { Card } from '../../components/Card';
import { Button } from '../../components/Button';
import { Alert, ErrorAlert } from '../../components/Alert';
import { Field } from '../../components/Field';
import { formatDateTime, formatRelative } from '../../lib/format';
import { UserStatusBadge } from './UserStatusBadge';
import { useResendInvitation, useUpdateUser } from './api';

/** The selected user: change the role, deactivate or reactivate, resend an invitation. */
export function UserPanel({ user, isSelf, onClose }: { user: UserSummary; isSelf: boolean; onClose: () => void }) {
  const update = useUpdateUser();
  const resend = useResendInvitation();
  const [role, setRole] = useState<Role>(user.role);
  const [done, setDone] = useState<string | null>(null);
  useEffect(() => {
    setRole(user.role);
    setDone(null);
    update.reset();
    resend.reset();
    // Reset only when another user is selected.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [user.id]);

  const change = (changes: { role?: Role; active?: boolean }, message: string) =>
    update.mutate({ id: user.id, changes }, { onSuccess: () => setDone(message) });

  return (
    <Card
      title={user.name}
      actions={
        <Button size="sm" variant="quiet" onClick={onClose} aria-label="Close the user panel">
          Close
        </Button>
      }
      className="w-full lg:w-72 lg:shrink-0"
    >
      <dl className="mb-4 grid grid-cols-[auto_1fr] gap-x-3 gap-y-1.5 text-sm">
        <dt className="text-ink-soft">E-mail</dt>
        <dd className="break-all">{user.email}</dd>
        <dt className="text-ink-soft">Status</dt>
        <dd>
          <UserStatusBadge status={user.status} />
        </dd>
        <dt className="text-ink-soft">Last sign-in</dt>
        <dd title={formatDateTime(user.lastSignInAt)}>{user.lastSignInAt ? formatRelative(user.lastSignInAt) : 'never'}</dd>
        <dt className="text-ink-soft">Created</dt>
        <dd className="font-mono text-xs tabular-nums leading-5">{formatDateTime(user.createdAt)}</dd>
      </dl>

      <div className="flex flex-col gap-4">
        {done ? <Alert tone="ok">{done}</Alert> : null}
        {update.isError ? <ErrorAlert error={update.error} /> : null}
        {resend.isError ? <ErrorAlert error={resend.error} /> : null}

        <div className="flex flex-col gap-2">
          <Field label="Role">
            <select className="field-input" value={role} onChange={(event) => setRole(event.target.value as Role)} disabled={isSelf || !user.active}>
              {ROLES.map((option) => (
                <option key={option} value={option}>
                  {ROLE_LABELS[option]}
                </option>
              ))}
            </select>
          </Field>
          <Button
            variant="primary"
            disabled={isSelf || role === user.role || update.isPending}
            onClick={() => change({ role }, `${user.name} is now ${ROLE_LABELS[role].toLowerCase()}.`)}
          >
            Change role
          </Button>
        </div>
        {isSelf ? <p className="-mt-2 text-xs text-ink-faint">You cannot change your own role or deactivate yourself; another admin can.</p> : null}

        {user.status === 'invited' ? (
          <Button disabled={resend.isPending} onClick={() => resend.mutate(user.id, { onSuccess: () => setDone(`A new invitation went to ${user.email}.`) })}>
            Resend invitation
          </Button>
        ) : null}

        <div className="border-t border-line pt-3">
          {user.active ? (
            <>
              <Button
                variant="danger"
                className="w-full"
                disabled={isSelf || update.isPending}
                onClick={() => {
                  if (window.confirm(`Deactivate ${user.name}? Their sessions and API tokens stop working at once.`)) change({ active: false }, `${user.name} is deactivated.`);
                }}
              >
                Deactivate
              </Button>
              <p className="mt-1.5 text-xs text-ink-faint">Sign-in, sessions and API tokens stop at once. Their records stay.</p>
            </>
          ) : (
            <Button className="w-full" disabled={update.isPending} onClick={() => change({ active: true }, `${user.name} can sign in again.`)}>
              Reactivate
            </Button>
          )}
        </div>
      </div>
    </Card>
  );
}
