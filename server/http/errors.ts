import type { ErrorRequestHandler } from 'express';
import { ZodError } from 'zod';

/** An error with an HTTP status and, optionally, the fields or rows it is about. */
export class HttpError extends Error {
  constructor(
    public readonly status: number,
    message: string,
    public readonly issues?: { path: string; message: string }[],
  ) {
    super(message);
  }
}

export const badRequest = (message: string, issues?: HttpError['issues']) => new HttpError(400, message, issues);
export const unauthorized = (message = 'Sign-in required') => new HttpError(401, message);
export const forbidden = (message = 'Your role does not allow this') => new HttpError(403, message);
export const notFound = (message = 'Not found') => new HttpError(404, message);
export const conflict = (message: string, issues?: HttpError['issues']) => new HttpError(409, message, issues);
export const unprocessable = (message: string, issues?: HttpError['issues']) => new HttpError(422, message, issues);

export function zodIssues(error: ZodError): { path: string; message: string }[] {
  return error.issues.map((issue) => ({ path: issue.path.join('.') || '(body)', message: issue.message }));
}

/** Last middleware: every failure becomes `{ error, issues? }` with a fitting status; 5xx details stay in the log. */
export const errorHandler: ErrorRequestHandler = (err, _req, res, next) => {
  // A streamed answer (CSV export) that fails half-way: the status is gone, so Express cuts the connection.
  if (res.headersSent) {
    console.error(err);
    return next(err);
  }
  if (err instanceof HttpError) {
    res.status(err.status).json({ error: err.message, ...(err.issues ? { issues: err.issues } : {}) });
    return;
  }
  if (err instanceof ZodError) {
    res.status(422).json({ error: 'The request is not valid', issues: zodIssues(err) });
    return;
  }
  const status = (err as { status?: number; statusCode?: number }).status ?? (err as { statusCode?: number }).statusCode;
  const type = (err as { type?: string }).type;
  if (type === 'entity.parse.failed') {
    res.status(400).json({ error: 'The request body is not valid JSON' });
    return;
  }
  if (type === 'entity.too.large' || status === 413 || (err as { code?: string }).code === 'LIMIT_FILE_SIZE') {
    res.status(413).json({ error: 'The request body is too large' });
    return;
  }
  if (status && status >= 400 && status < 500) {
    res.status(status).json({ error: (err as Error).message });
    return;
  }
  console.error(err);
  res.status(500).json({ error: 'Internal error: the server logged the details' });
};
