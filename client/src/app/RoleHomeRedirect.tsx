import { Navigate } from 'react-router-dom';
import { useCurrentUser } from './currentUser';
import { ROLE_HOME } from './navigation';

/** `/` sends each role to its home page. */
export function RoleHomeRedirect() {
  const user = useCurrentUser();
  return <Navigate to={ROLE_HOME[user.role]} replace />;
}
