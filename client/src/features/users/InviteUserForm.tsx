import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { InviteUserBodySchema, type InviteUserBody, type UserSummary } from '@shared/schemas/users';
import { ROLES, ROLE_LABELS } from '@shared/schemas/common';
import { Field } from '../../components/Field';
import { Button } from '../../components/Button';
import { ErrorAlert } from '../../components/Alert';
import { useInviteUser } from './api';

/** Invites a colleague: the server creates the account without a password and mails a one-time link. */
export function InviteUserForm({ onInvited, onCancel }: { onInvited: (user: UserSummary) => void; onCancel: () => void }) {
  const invite = useInviteUser();
  const form = useForm<InviteUserBody>({ resolver: zodResolver(InviteUserBodySchema), defaultValues: { email: '', name: '', role: 'analyst' } });
  const { errors } = form.formState;
  const submit = form.handleSubmit((body) =>
    invite.mutate(body, {
      onSuccess: (user) => {
        form.reset();
        onInvited(user);
      },
      onError: (error) => {
        // Field-level issues from the server (e.g. e-mail already taken) go beside their field.
        for (const issue of (error as { issues?: { path: string; message: string }[] }).issues ?? []) {
          if (issue.path === 'email' || issue.path === 'name' || issue.path === 'role') form.setError(issue.path, { message: issue.message });
        }
      },
    }),
  );
  return (
    <form onSubmit={submit} noValidate aria-label="Invite a user" className="flex flex-col gap-3">
      {invite.isError ? <ErrorAlert error={invite.error} showIssues={false} /> : null}
      <div className="grid gap-3 sm:grid-cols-[1.3fr_1fr_0.8fr]">
        <Field label="E-mail" error={errors.email?.message}>
          <input type="email" className="field-input" autoComplete="off" {...form.register('email')} />
        </Field>
        <Field label="Name" error={errors.name?.message}>
          <input type="text" className="field-input" autoComplete="off" {...form.register('name')} />
        </Field>
        <Field label="Role" error={errors.role?.message}>
          <select className="field-input" {...form.register('role')}>
            {ROLES.map((role) => (
              <option key={role} value={role}>
                {ROLE_LABELS[role]}
              </option>
            ))}
          </select>
        </Field>
      </div>
      <div className="flex items-center gap-2">
        <Button type="submit" variant="primary" disabled={invite.isPending}>
          {invite.isPending ? 'Sending…' : 'Send invitation'}
        </Button>
        <Button variant="quiet" onClick={onCancel}>
          Cancel
        </Button>
        <p className="ml-2 text-xs text-ink-faint">The invitation mail holds a one-time link to set a password; it expires.</p>
      </div>
    </form>
  );
}
