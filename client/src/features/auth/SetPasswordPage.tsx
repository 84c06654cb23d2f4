import { Link } from 'react-router-dom';
import { AuthFrame } from './AuthFrame';

export default function SetPasswordPage() {
  return (
    <AuthFrame title="Set your password" footer={<Link to="/sign-in" className="text-accent underline">Back to sign-in</Link>}>
      <p className="text-sm text-ink-soft">Ask an administrator for a reset link.</p>
    </AuthFrame>
  );
}
