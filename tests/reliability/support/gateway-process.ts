/**
 * A gateway as a CHILD PROCESS, started through the production entry point
 * (`node --import tsx gateway/server.ts`, which stops gracefully on SIGTERM), so the fault tests can
 * send it real signals. The port is chosen here (a free loopback port) and the process is ready when
 * /healthz answers. Its output is kept for failure messages.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import net from 'node:net';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

export const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..', '..');

export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = net.createServer();
    server.once('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const { port } = server.address() as net.AddressInfo;
      server.close(() => resolve(port));
    });
  });
}

export interface GatewayProcess {
  url: string;
  child: ChildProcess;
  output(): string;
  /** Resolves with the exit code (null when killed by a signal) and the signal. */
  exited: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
  /** SIGTERM and wait (a no-op when it already exited). */
  stop(): Promise<void>;
}

export async function startGatewayProcess(env: Record<string, string> = {}): Promise<GatewayProcess> {
  const port = await freePort();
  const child = spawn(process.execPath, ['--import', 'tsx', path.join(root, 'gateway', 'server.ts')], {
    cwd: root,
    env: { ...process.env, NODE_ENV: 'test', LOG_LEVEL: 'warn', HOST: '127.0.0.1', PORT: String(port), EOS_POOL_MAX_THREADS: '2', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let output = '';
  child.stdout!.on('data', (b: Buffer) => (output = (output + b).slice(-20_000)));
  child.stderr!.on('data', (b: Buffer) => (output = (output + b).slice(-20_000)));
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) => child.once('exit', (code, signal) => resolve({ code, signal })));
  const url = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 60_000;
  let gone = false;
  void exited.then(() => (gone = true));
  for (;;) {
    if (gone) throw new Error(`gateway process exited before it was ready:\n${output}`);
    try {
      const res = await fetch(`${url}/healthz`);
      if (res.status === 200) break;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline) {
      child.kill('SIGKILL');
      throw new Error(`gateway process not ready after 60 s:\n${output}`);
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  return {
    url,
    child,
    output: () => output,
    exited,
    async stop() {
      if (child.exitCode === null && child.signalCode === null) child.kill('SIGTERM');
      await exited;
    },
  };
}
