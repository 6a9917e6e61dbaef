/**
 * Shared by the examples tests: a test gateway with a real API key (tests/support), a scratch
 * build folder, and running the examples' builds and programs as child processes.
 */
import { execFile } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { startTestGateway } from '../support/gateway.js';
import { Fixtures, type TestKey } from '../support/fixtures.js';
import type { RunningGateway } from '../../gateway/server.js';

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
export const EXAMPLES = path.join(ROOT, 'examples');
/** Debian's Python, not a pyenv one: the examples promise the standard library (+ python3-numpy). */
export const DEBIAN_PYTHON = '/usr/bin/python3';

export interface Run {
  code: number;
  stdout: string;
  stderr: string;
}

/** Runs a program; never rejects on a non-zero exit (the caller asserts on the code). */
export function run(cmd: string, args: string[], options: { cwd?: string; env?: NodeJS.ProcessEnv } = {}): Promise<Run> {
  return new Promise((resolve, reject) => {
    execFile(cmd, args, { cwd: options.cwd ?? ROOT, env: options.env ?? process.env, maxBuffer: 64 * 1024 * 1024, timeout: 300_000 }, (error, stdout, stderr) => {
      if (error && typeof error.code !== 'number') return reject(error);
      resolve({ code: error ? Number(error.code) : 0, stdout, stderr });
    });
  });
}

/** Runs a build step and fails with its output when it does not succeed. */
export async function build(cmd: string, args: string[], cwd?: string): Promise<void> {
  const result = await run(cmd, args, { cwd });
  if (result.code !== 0) throw new Error(`${cmd} ${args.join(' ')} failed (${result.code}):\n${result.stdout}\n${result.stderr}`);
}

/** A fresh scratch folder, removed by the returned function. */
export function scratch(label: string): { dir: string; remove: () => void } {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), `fermiwell-${label}-`));
  return { dir, remove: () => fs.rmSync(dir, { recursive: true, force: true }) };
}

export interface ExampleGateway {
  gateway: RunningGateway;
  key: TestKey;
  fixtures: Fixtures;
  /** The environment the examples read: FERMIWELL_URL and FERMIWELL_KEY. */
  env: NodeJS.ProcessEnv;
  close(): Promise<void>;
}

/** A test gateway and a key of an organisation on the Group plan (real token, eos:evaluate). */
export async function exampleGateway(): Promise<ExampleGateway> {
  const gateway = await startTestGateway();
  const fixtures = new Fixtures();
  const key = await fixtures.keyOnPlan('group');
  return {
    gateway,
    key,
    fixtures,
    env: { ...process.env, FERMIWELL_URL: gateway.url, FERMIWELL_KEY: key.token },
    async close() {
      await gateway.close();
      await fixtures.close();
    },
  };
}

/** Rows of whitespace-separated fields whose first word is `tag`. */
export function rows(output: string, tag: string): string[][] {
  return output
    .split('\n')
    .map((line) => line.trim().split(/\s+/))
    .filter((words) => words[0] === tag);
}

/** |a − b| ≤ tolerance · |b|, with a message naming both. */
export function relativeDifference(a: number, b: number): number {
  return Math.abs(a - b) / Math.abs(b);
}
