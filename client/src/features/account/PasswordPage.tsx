import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { ChangePasswordBodySchema, PASSWORD_MIN_LENGTH } from '@shared/schemas/users';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Field } from '../../components/Field';
import { Button } from '../../components/Button';
import { Alert, ErrorAlert } from '../../components/Alert';
import { useCurrentUser } from '../../app/currentUser';
import { useChangePassword } from '../auth/api';

const FormSchema = ChangePasswordBodySchema.extend({ repeat: z.string() }).refine((values) => values.newPassword === values.repeat, {
  message: 'the two passwords differ',
  path: ['repeat'],
});
type Form = z.infer<typeof FormSchema>;

export default function PasswordPage() {
  const user = useCurrentUser();
  const change = useChangePassword();
  const form = useForm<Form>({ resolver: zodResolver(FormSchema), defaultValues: { currentPassword: '', newPassword: '', repeat: '' } });
  const { errors } = form.formState;
  const submit = form.handleSubmit((values) =>
    change.mutate(
      { currentPassword: values.currentPassword, newPassword: values.newPassword },
      {
        onSuccess: () => form.reset(),
        onError: (error) => {
          for (const issue of (error as { issues?: { path: string; message: string }[] }).issues ?? []) {
            if (issue.path === 'currentPassword' || issue.path === 'newPassword') form.setError(issue.path, { message: issue.message });
          }
        },
      },
    ),
  );
  return (
    <div className="max-w-xl">
      <PageHeader title="Password" description="Change the password you sign in with. Your other browser sessions end; API tokens keep working until you revoke them." />
      <Card>
        <form onSubmit={submit} noValidate aria-label="Change password" className="flex flex-col gap-4">
          {change.isSuccess ? <Alert tone="ok">Your password is changed. Other sessions have ended.</Alert> : null}
          {change.isError ? <ErrorAlert error={change.error} showIssues={false} /> : null}
          {/* Lets password managers file the new password under the right account. */}
          <input type="text" name="username" autoComplete="username" value={user.email} readOnly hidden />
          <Field label="Current password" error={errors.currentPassword?.message}>
            <input type="password" autoComplete="current-password" className="field-input" {...form.register('currentPassword')} />
          </Field>
          <Field label="New password" hint={`At least ${PASSWORD_MIN_LENGTH} characters.`} error={errors.newPassword?.message}>
            <input type="password" autoComplete="new-password" className="field-input" {...form.register('newPassword')} />
          </Field>
          <Field label="Repeat the new password" error={errors.repeat?.message}>
            <input type="password" autoComplete="new-password" className="field-input" {...form.register('repeat')} />
          </Field>
          <div>
            <Button type="submit" variant="primary" disabled={change.isPending}>
              Change password
            </Button>
          </div>
        </form>
      </Card>
    </div>
  );
}
