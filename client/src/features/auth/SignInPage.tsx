import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { Link, Navigate, useNavigate, useSearchParams } from 'react-router-dom';
import { SignInBodySchema, type SignInBody } from '@shared/schemas/auth';
import type { Role } from '@shared/schemas/common';
import { Field } from '../../components/Field';
import { Button } from '../../components/Button';
import { ErrorAlert } from '../../components/Alert';
import { ROLE_HOME } from '../../app/navigation';
import { useSession, useSignIn } from './api';
import { AuthFrame } from './AuthFrame';

/** Only same-site paths are followed after sign-in (never `//other.host`). */
function safeNext(next: string | null): string | null {
  return next && next.startsWith('/') && !next.startsWith('//') && !next.startsWith('/sign-in') ? next : null;
}

function homeFor(role: Role, next: string | null): string {
  return safeNext(next) ?? ROLE_HOME[role];
}

export default function SignInPage() {
  const [params] = useSearchParams();
  const navigate = useNavigate();
  const session = useSession();
  const signIn = useSignIn();
  const form = useForm<SignInBody>({ resolver: zodResolver(SignInBodySchema), defaultValues: { email: '', password: '' } });
  const { errors } = form.formState;

  if (session.data) return <Navigate to={homeFor(session.data.role, params.get('next'))} replace />;

  const submit = form.handleSubmit((body) =>
    signIn.mutate(body, { onSuccess: (answer) => navigate(homeFor(answer.user.role, params.get('next')), { replace: true }) }),
  );

  return (
    <AuthFrame title="Sign in" footer={<Link to="/forgot-password" className="text-accent underline">Forgot your password?</Link>}>
      <form onSubmit={submit} noValidate className="flex flex-col gap-4">
        {signIn.isError ? <ErrorAlert error={signIn.error} /> : null}
        {params.get('reset') === 'done' ? <p className="rounded-md bg-ok-soft px-3 py-2 text-sm text-ok">Your password is set. Sign in with it.</p> : null}
        <Field label="E-mail" error={errors.email?.message}>
          <input type="email" autoComplete="username" autoFocus className="field-input" {...form.register('email')} />
        </Field>
        <Field label="Password" error={errors.password?.message}>
          <input type="password" autoComplete="current-password" className="field-input" {...form.register('password')} />
        </Field>
        <Button type="submit" variant="primary" disabled={signIn.isPending} className="mt-1 w-full">
          {signIn.isPending ? 'Signing in…' : 'Sign in'}
        </Button>
      </form>
    </AuthFrame>
  );
}
