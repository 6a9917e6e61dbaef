/** Reads pass/fail/skip counts from the test runners' own summaries (node:test TAP, vitest). */
export interface Counts {
  passed: number;
  failed: number;
  skipped: number;
}

export const zero = (): Counts => ({ passed: 0, failed: 0, skipped: 0 });

export function add(a: Counts, b: Counts): Counts {
  return { passed: a.passed + b.passed, failed: a.failed + b.failed, skipped: a.skipped + b.skipped };
}

/** node:test's TAP reporter ends with "# pass N", "# fail N", "# cancelled N", "# skipped N", "# todo N". */
export function parseTap(tap: string): Counts | undefined {
  const read = (name: string) => {
    const matches = [...tap.matchAll(new RegExp(`^# ${name} (\\d+)$`, 'gm'))];
    return matches.length ? Number(matches[matches.length - 1]![1]) : undefined;
  };
  const pass = read('pass');
  const fail = read('fail');
  if (pass === undefined || fail === undefined) return undefined;
  return { passed: pass, failed: fail + (read('cancelled') ?? 0), skipped: (read('skipped') ?? 0) + (read('todo') ?? 0) };
}

/** vitest's summary line: "Tests  2 failed | 10 passed | 1 skipped (13)". */
export function parseVitest(output: string): Counts | undefined {
  // eslint-disable-next-line no-control-regex
  const plain = output.replace(/\x1b\[[0-9;]*m/g, '');
  const line = plain.split('\n').reverse().find((l) => /^\s*Tests\s+\d/.test(l));
  if (!line) return undefined;
  const num = (word: string) => Number(new RegExp(`(\\d+) ${word}`).exec(line)?.[1] ?? 0);
  return { passed: num('passed'), failed: num('failed'), skipped: num('skipped') + num('todo') };
}
