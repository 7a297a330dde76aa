/**
 * A bench measurement in a fresh Node process of its own (nothing shared with the caller's
 * heap or JIT): the children are the compiled scripts beside this file in dist/bench/.
 */
import { spawn } from 'node:child_process';
import * as path from 'node:path';

/**
 * Runs dist/bench/<script> with `args` and resolves with what it printed on stdout and
 * stderr; rejects when it cannot start or exits non-zero, naming it by `label`.
 */
export function runBenchChild(
  script: string,
  args: string[],
  label: string,
): Promise<{ out: string; err: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [path.join(__dirname, script), ...args], {
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let out = '';
    let err = '';
    child.stdout.on('data', (d: Buffer) => (out += d.toString()));
    child.stderr.on('data', (d: Buffer) => (err += d.toString()));
    child.on('error', reject);
    child.on('close', (code) => {
      if (code !== 0) return reject(new Error(`${label} exited with ${code}: ${err.trim()}`));
      resolve({ out, err });
    });
  });
}
