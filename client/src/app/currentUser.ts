import { createContext, useContext } from 'react';
import type { PublicUser } from '@shared/schemas/auth';

/** The signed-in user, provided by the shell to every page inside it. */
export const CurrentUserContext = createContext<PublicUser | null>(null);

export function useCurrentUser(): PublicUser {
  const user = useContext(CurrentUserContext);
  if (!user) throw new Error('useCurrentUser is only available inside the signed-in shell');
  return user;
}
