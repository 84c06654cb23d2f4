import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { Link, useNavigate, useSearchParams } from 'react-router-dom';
import { PASSWORD_MIN_LENGTH, SetPasswordBodySchema } from '@shared/schemas/users';
import { Field } from '../../components/Field';
import { Button } from '../../components/Button';
import { Alert, ErrorAlert } from '../../components/Alert';
import { formatDateTime } from '../../lib/format';
import { AuthFrame } from './AuthFrame';
import { usePasswordLink, useSetPassword } from './api';

const FormSchema = z
  .object({ password: SetPasswordBodySchema.shape.password, repeat: z.string() })
  .refine((values) => values.password === values.repeat, { message: 'the two passwords differ', path: ['repeat'] });
type Form = z.infer<typeof FormSchema>;

/** Where invitation and reset links lead: /set-password?token=… */
export default function SetPasswordPage() {
  const [params] = useSearchParams();
  const token = params.get('token');
  const navigate = useNavigate();
  const link = usePasswordLink(token);
  const setPassword = useSetPassword();
  const form = useForm<Form>({ resolver: zodResolver(FormSchema), defaultValues: { password: '', repeat: '' } });
  const { errors } = form.formState;

  const footer = <Link to="/sign-in" className="text-accent underline">Back to sign-in</Link>;
  if (!token)
    return (
      <AuthFrame title="Set your password" footer={footer}>
        <Alert tone="breach">This address has no link token. Open the link from your invitation or reset mail, or ask for a new one.</Alert>
      </AuthFrame>
    );
  if (link.isPending)
    return (
      <AuthFrame title="Set your password" footer={footer}>
        <p className="text-sm text-ink-soft">Checking the link…</p>
      </AuthFrame>
    );
  if (link.isError)
    return (
      <AuthFrame title="Set your password" footer={<Link to="/forgot-password" className="text-accent underline">Ask for a new link</Link>}>
        <ErrorAlert error={link.error} />
      </AuthFrame>
    );

  const info = link.data;
  const submit = form.handleSubmit((values) =>
    setPassword.mutate({ token, password: values.password }, { onSuccess: () => navigate('/sign-in?reset=done', { replace: true }) }),
  );
  return (
    <AuthFrame title={info.purpose === 'invitation' ? 'Welcome to Loadline' : 'Choose a new password'} footer={footer}>
      <form onSubmit={submit} noValidate className="flex flex-col gap-4">
        <p className="text-sm text-ink-soft">
          {info.purpose === 'invitation' ? `${info.name}, choose a password for ` : 'A new password for '}
          <span className="font-medium text-ink">{info.email}</span>. The link works once, until {formatDateTime(info.expiresAt)}.
        </p>
        {setPassword.isError ? <ErrorAlert error={setPassword.error} /> : null}
        <Field label="New password" hint={`At least ${PASSWORD_MIN_LENGTH} characters.`} error={errors.password?.message}>
          <input type="password" autoComplete="new-password" autoFocus className="field-input" {...form.register('password')} />
        </Field>
        <Field label="Repeat the password" error={errors.repeat?.message}>
          <input type="password" autoComplete="new-password" className="field-input" {...form.register('repeat')} />
        </Field>
        <Button type="submit" variant="primary" disabled={setPassword.isPending} className="w-full">
          Set password
        </Button>
      </form>
    </AuthFrame>
  );
}
