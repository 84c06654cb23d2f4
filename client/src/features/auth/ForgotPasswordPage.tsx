import { Link } from 'react-router-dom';
import { AuthFrame } from './AuthFrame';

export default function ForgotPasswordPage() {
  return (
    <AuthFrame title="Forgot your password?" footer={<Link to="/sign-in" className="text-accent underline">Back to sign-in</Link>}>
      <p className="text-sm text-ink-soft">Ask an administrator for a reset link.</p>
    </AuthFrame>
  );
}
