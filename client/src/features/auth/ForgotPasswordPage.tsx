import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { Link } from 'react-router-dom';
import { PasswordResetRequestBodySchema, type PasswordResetRequestBody } from '@shared/schemas/users';
import { Field } from '../../components/Field';
import { Button } from '../../components/Button';
import { Alert, ErrorAlert } from '../../components/Alert';
import { AuthFrame } from './AuthFrame';
import { useRequestPasswordReset } from './api';

export default function ForgotPasswordPage() {
  const request = useRequestPasswordReset();
  const form = useForm<PasswordResetRequestBody>({ resolver: zodResolver(PasswordResetRequestBodySchema), defaultValues: { email: '' } });
  const submit = form.handleSubmit((body) => request.mutate(body));
  return (
    <AuthFrame title="Reset your password" footer={<Link to="/sign-in" className="text-accent underline">Back to sign-in</Link>}>
      {request.isSuccess ? (
        <Alert tone="ok" title="Check your mail">
          If {form.getValues('email')} belongs to an active Loadline account, a message with a one-time link to choose a new password is on its way. The link expires soon; ask
          again if it does.
        </Alert>
      ) : (
        <form onSubmit={submit} noValidate className="flex flex-col gap-4">
          <p className="text-sm text-ink-soft">Give the e-mail you sign in with. We send a one-time link to choose a new password.</p>
          {request.isError ? <ErrorAlert error={request.error} /> : null}
          <Field label="E-mail" error={form.formState.errors.email?.message}>
            <input type="email" autoComplete="username" autoFocus className="field-input" {...form.register('email')} />
          </Field>
          <Button type="submit" variant="primary" disabled={request.isPending} className="w-full">
            Send the link
          </Button>
        </form>
      )}
    </AuthFrame>
  );
}
