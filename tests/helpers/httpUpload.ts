// Raw HTTP helpers for tests and benchmarks that need a live server: sign-in, a streamed multipart upload that
// can be cut off, progress polling, and a child-process server.
import { spawn, type ChildProcess } from 'node:child_process';
import { createReadStream, statSync } from 'node:fs';
import http from 'node:http';
import { basename, join } from 'node:path';
import { createInterface } from 'node:readline';

export async function jsonRequest(baseUrl: string, method: string, path: string, body?: unknown, token?: string): Promise<{ status: number; body: any }> {
  const res = await fetch(`${baseUrl}${path}`, {
    method,
    headers: { 'content-type': 'application/json', ...(token ? { authorization: `Bearer ${token}` } : {}) },
    body: body === undefined ? undefined : JSON.stringify(body),
  });
  const text = await res.text();
  return { status: res.status, body: text ? JSON.parse(text) : null };
}

export async function signInHttp(baseUrl: string, email: string, password: string): Promise<string> {
  const res = await jsonRequest(baseUrl, 'POST', '/api/auth/sign-in', { email, password });
  if (res.status !== 200) throw new Error(`sign-in failed: ${res.status}`);
  return res.body.token;
}

/**
 * Streams a file as multipart/form-data to POST /api/imports. Answers the request (to destroy it mid-way)
 * and a promise of the answer (rejects if the connection is cut).
 */
export function streamUpload(baseUrl: string, token: string, path: string, fields: Record<string, string>, ref: string) {
  const boundary = `----loadline${Date.now().toString(16)}`;
  const head = Object.entries(fields)
    .map(([k, v]) => `--${boundary}\r\nContent-Disposition: form-data; name="${k}"\r\n\r\n${v}\r\n`)
    .join('') + `--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="${basename(path)}"\r\nContent-Type: text/csv\r\n\r\n`;
  const tail = `\r\n--${boundary}--\r\n`;
  const length = Buffer.byteLength(head) + statSync(path).size + Buffer.byteLength(tail);
  const url = new URL(`${baseUrl}/api/imports?ref=${ref}`);
  let request!: http.ClientRequest;
  const answer = new Promise<{ status: number; body: any }>((resolve, reject) => {
    request = http.request(url, { method: 'POST', headers: { authorization: `Bearer ${token}`, 'content-type': `multipart/form-data; boundary=${boundary}`, 'content-length': length } }, (res) => {
      let text = '';
      res.setEncoding('utf8');
      res.on('data', (c) => (text += c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body: text ? JSON.parse(text) : null }));
      res.on('error', reject);
    });
    request.on('error', reject);
    request.write(head);
    const file = createReadStream(path);
    file.pipe(request, { end: false });
    file.on('end', () => request.end(tail));
  });
  return { request: () => request, answer };
}

export async function waitFor<T>(probe: () => Promise<T | undefined>, timeoutMs = 60_000, everyMs = 20): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const value = await probe();
    if (value !== undefined) return value;
    if (Date.now() > until) throw new Error('timed out waiting');
    await new Promise((r) => setTimeout(r, everyMs));
  }
}

/** Starts tests/helpers/serverProcess.ts as a child; answers its URL and the process. */
export async function startServerProcess(env: NodeJS.ProcessEnv = {}): Promise<{ url: string; child: ChildProcess }> {
  const child = spawn(process.execPath, ['--import', 'tsx', join(import.meta.dirname, 'serverProcess.ts')], {
    env: { ...process.env, ...env },
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  const lines = createInterface({ input: child.stdout! });
  const port = await new Promise<number>((resolve, reject) => {
    child.once('exit', (code) => reject(new Error(`server process exited with ${code}`)));
    lines.on('line', (line) => {
      try {
        const parsed = JSON.parse(line) as { port?: number };
        if (parsed.port) resolve(parsed.port);
        else process.stderr.write(`[server] ${line}\n`);
      } catch {
        process.stderr.write(`[server] ${line}\n`); // other output: pass it on
      }
    });
  });
  return { url: `http://127.0.0.1:${port}`, child };
}
