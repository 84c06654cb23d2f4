import { spawn, type ChildProcess } from 'node:child_process';
import { resolve } from 'node:path';

const repo = resolve(import.meta.dirname, '..');

/** Starts a TypeScript entry under tsx with a name prefix on its output. */
export function startTs(name: string, script: string, env: NodeJS.ProcessEnv = {}): ChildProcess {
  const child = spawn(process.execPath, ['--import', 'tsx', resolve(repo, script)], {
    cwd: repo,
    env: { ...process.env, ...env },
    stdio: ['ignore', 'inherit', 'inherit'],
  });
  child.on('exit', (code, signal) => {
    if (!stopping) {
      console.error(`[${name}] exited (${code ?? signal}); stopping Loadline`);
      stopAll(1);
    }
  });
  children.push(child);
  return child;
}

const children: ChildProcess[] = [];
let stopping = false;

export function stopAll(code = 0): void {
  stopping = true;
  for (const child of children) child.kill('SIGTERM');
  setTimeout(() => process.exit(code), 500).unref();
}

process.on('SIGINT', () => stopAll(0));
process.on('SIGTERM', () => stopAll(0));

export function runSync(cmd: string, args: string[], env: NodeJS.ProcessEnv = {}): Promise<void> {
  return new Promise((done, fail) => {
    const child = spawn(cmd, args, { cwd: repo, stdio: 'inherit', env: { ...process.env, ...env } });
    child.on('exit', (code) => (code === 0 ? done() : fail(new Error(`${cmd} ${args.join(' ')} exited with ${code}`))));
  });
}
