import { useEffect } from 'react';

/** Names the page in the browser tab and history: `Title · Loadline`. */
export function useDocumentTitle(title: string): void {
  useEffect(() => {
    document.title = `${title} · Loadline`;
  }, [title]);
}
