/**
 * Uploaded files on disk: multer writes each upload to dataDir/uploads (streamed, size-limited); a previewed
 * file is kept under its ref until it is committed, and removed otherwise.
 */
import { mkdirSync, readdirSync, statSync } from 'node:fs';
import { rename, rm } from 'node:fs/promises';
import { join } from 'node:path';
import type { RequestHandler } from 'express';
import multer from 'multer';
import { HttpError, unprocessable } from '../../http/errors';

export function uploadsDir(dataDir: string): string {
  return join(dataDir, 'uploads');
}

export function keptUploadPath(dataDir: string, ref: string): string {
  return join(uploadsDir(dataDir), `${ref}.csv`);
}

function megabytes(bytes: number): string {
  return `${Math.round((bytes / 1024 / 1024) * 10) / 10} MB`;
}

/**
 * multer to disk for one `file` part, with a clear 413 beyond the limit and the temp file removed when the
 * response ends (unless the service kept it by moving it).
 */
export function fileUpload(dataDir: string, limitBytes: number): RequestHandler {
  const dir = uploadsDir(dataDir);
  mkdirSync(dir, { recursive: true });
  const upload = multer({ dest: dir, limits: { fileSize: limitBytes, files: 1, fields: 30, fieldSize: 10_000 } }).single('file');
  return (req, res, next) => {
    upload(req, res, (error: unknown) => {
      if (req.file) {
        const path = req.file.path;
        res.on('close', () => void rm(path, { force: true }));
      }
      if (error) {
        if (error instanceof multer.MulterError && error.code === 'LIMIT_FILE_SIZE') {
          return next(new HttpError(413, `The file is larger than the upload limit of ${megabytes(limitBytes)}`));
        }
        if (error instanceof multer.MulterError) return next(unprocessable(`The upload is not valid: ${error.message}`, [{ path: error.field ?? 'file', message: error.message }]));
        return next(error);
      }
      if (!req.file) return next(unprocessable('No file was uploaded', [{ path: 'file', message: 'attach the CSV file as the multipart part named "file"' }]));
      next();
    });
  };
}

/** Keeps a previewed upload for a later commit. */
export async function keepUpload(tempPath: string, dataDir: string, ref: string): Promise<void> {
  await rename(tempPath, keptUploadPath(dataDir, ref));
}

/** Removes kept previews older than a day (called on each new upload). */
export function pruneKeptUploads(dataDir: string, maxAgeMs = 24 * 3600 * 1000): void {
  const dir = uploadsDir(dataDir);
  for (const name of readdirSync(dir)) {
    const path = join(dir, name);
    try {
      if (Date.now() - statSync(path).mtimeMs > maxAgeMs) void rm(path, { force: true });
    } catch {
      // removed meanwhile
    }
  }
}
