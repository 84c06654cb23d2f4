/** In-process progress of running imports, keyed by the upload's ref, for the client's processing bar. */
import type { ImportProgress } from '../../../shared/schemas/imports';

const running = new Map<string, ImportProgress & { userId: number; updatedAt: number }>();

export function reportProgress(ref: string, userId: number, progress: ImportProgress): void {
  running.set(ref, { ...progress, userId, updatedAt: Date.now() });
  // Finished entries linger a minute so a last poll still sees them.
  for (const [key, value] of running) if (Date.now() - value.updatedAt > 60_000) running.delete(key);
}

export function readProgress(ref: string, userId: number): ImportProgress {
  const entry = running.get(ref);
  if (!entry || entry.userId !== userId) return { phase: 'waiting', bytesRead: 0, totalBytes: 0, rowsRead: 0 };
  const { phase, bytesRead, totalBytes, rowsRead } = entry;
  return { phase, bytesRead, totalBytes, rowsRead };
}
