/**
 * The `npm start` path end to end on a cluster of its own: first start initialises PostgreSQL,
 * migrates, seeds and serves /readyz = ready and the dashboard; SIGTERM (what Ctrl-C's SIGINT also
 * triggers) stops everything it started with no process left behind; a second start reuses the data.
 */
import { after, test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn, execFileSync, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import path from 'node:path';

const root = path.resolve(import.meta.dirname, '..', '..');
const dataDir = path.join(root, '.data', `e2e-start-${process.pid}`);

async function freePort(): Promise<number> {
  const server = net.createServer();
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()));
  const { port } = server.address() as net.AddressInfo;
  await new Promise<void>((r) => server.close(() => r()));
  return port;
}

/** Processes whose command line mentions our data folder (postgres runs with -D <dataDir>/pg/data). */
function processesUsing(folder: string): string[] {
  const out = execFileSync('ps', ['-eo', 'pid=,args='], { encoding: 'utf8' });
  return out.split('\n').filter((line) => line.includes(folder) && !line.includes('ps -eo'));
}

function startCommand(env: NodeJS.ProcessEnv): { child: ChildProcess; output: () => string; ready: Promise<string> } {
  const child = spawn('bash', ['scripts/start.sh'], { cwd: root, env, stdio: ['ignore', 'pipe', 'pipe'] });
  children.push(child);
  let output = '';
  const ready = new Promise<string>((resolve, reject) => {
    const onData = (b: Buffer) => {
      output += b;
      const match = /Dashboard\s+(http:\/\/\S+)\//.exec(output);
      if (match) resolve(match[1]!);
    };
    child.stdout!.on('data', onData);
    child.stderr!.on('data', (b: Buffer) => (output += b));
    child.on('exit', (code) => reject(new Error(`npm start exited early (${code}):\n${output}`)));
  });
  return { child, output: () => output, ready };
}

async function stop(child: ChildProcess, signal: NodeJS.Signals): Promise<number | null> {
  const exited = new Promise<number | null>((r) => child.once('exit', (code) => r(code)));
  child.kill(signal);
  const timer = setTimeout(() => child.kill('SIGKILL'), 30_000);
  const code = await exited;
  clearTimeout(timer);
  return code;
}

const children: ChildProcess[] = [];

/** Whatever happened in the test: no start process and no PostgreSQL of ours may outlive it. */
after(async () => {
  for (const child of children) {
    if (child.exitCode === null && child.signalCode === null) await stop(child, 'SIGTERM');
  }
  const clusterData = path.join(dataDir, 'pg', 'data');
  if (processesUsing(dataDir).length > 0 && fs.existsSync(clusterData)) {
    execFileSync('runuser', ['-u', 'postgres', '--', 'bash', '-c', `$(ls -d /usr/lib/postgresql/*/bin | tail -1)/pg_ctl -D '${clusterData}' -m immediate stop`], { cwd: '/' });
  }
  fs.rmSync(dataDir, { recursive: true, force: true });
});

test('npm start: serves readiness and the dashboard, stops cleanly, and reuses its data', { timeout: 300_000 }, async () => {
  const env: NodeJS.ProcessEnv = {
    ...process.env,
    DATABASE_URL: '',
    FW_DATA_DIR: dataDir,
    FW_PG_PORT: String(await freePort()),
    PORT: String(await freePort()),
    LOG_LEVEL: 'warn',
    // as a person runs it: not the test environment npm test sets for the other tests
    NODE_ENV: 'development',
    JWT_SECRET: '',
  };
  delete env['JWT_SECRET'];
  delete env['DATABASE_URL'];

  // first start: a new cluster
  const first = startCommand(env);
  const url = await first.ready;
  assert.match(first.output(), /initialising a new cluster/);
  assert.match(first.output(), /imogen\.thursby@harrowgate\.example/, 'prints the demo sign-ins');
  assert.match(first.output(), /free-energy table/, 'names the free-energy table the gateway serves method "table" from');
  const ready = await fetch(`${url}/readyz`);
  assert.equal(ready.status, 200);
  const page = await fetch(`${url}/`, { headers: { accept: 'text/html' } });
  assert.equal(page.status, 200);
  assert.match(await page.text(), /<fw-root/);
  assert.ok(processesUsing(dataDir).length > 0, 'PostgreSQL runs from our data folder');

  assert.equal(await stop(first.child, 'SIGTERM'), 0);
  assert.match(first.output(), /PostgreSQL stopped/);
  assert.deepEqual(processesUsing(dataDir), [], 'no process of ours is left');
  await assert.rejects(fetch(`${url}/healthz`));

  // second start: same cluster and data, Ctrl-C's signal, and no LOG_LEVEL, as a person starts it
  const personEnv = { ...env };
  delete personEnv['LOG_LEVEL'];
  const second = startCommand(personEnv);
  const url2 = await second.ready;
  assert.doesNotMatch(second.output(), /initialising a new cluster/);
  assert.match(second.output(), /0 migration\(s\) applied/);
  assert.equal((await fetch(`${url2}/readyz`)).status, 200);
  // answered requests do not bury the banner (warnings and errors only), and the banner says how to see them
  assert.equal((await fetch(`${url2}/`, { headers: { accept: 'text/html' } })).status, 200);
  await new Promise((r) => setTimeout(r, 300));
  assert.match(second.output(), /Gateway log: warn \(a line per request: LOG_LEVEL=info npm start\)/);
  assert.doesNotMatch(second.output(), /"msg":"request completed"/);
  assert.equal(await stop(second.child, 'SIGINT'), 0);
  assert.deepEqual(processesUsing(dataDir), []);
});
