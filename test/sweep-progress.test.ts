/**
 * The plain progress lines of sweeps and runs (what a log file or CI sees): count, rate,
 * ETA, printed every 10 % or every 10 s, nothing when quiet. A fake clock keeps it exact.
 */
import { describe, expect, it } from 'vitest';
import { createProgress, createRunProgress, formatDuration, formatProgressLine } from '../src/cli/progress';

function sink() {
  const lines: string[] = [];
  const stream = {
    write: (s: string) => {
      lines.push(...s.split('\n').filter((x) => x !== ''));
      return true;
    },
    isTTY: false,
  } as unknown as NodeJS.WriteStream;
  return { lines, stream };
}

describe('progress', () => {
  it('formats durations and the sweep line: 192 points left at 2.1 points/s is 91.4 s, shown as 1m31s', () => {
    expect(formatDuration(45)).toBe('45s');
    expect(formatDuration(90)).toBe('1m30s');
    expect(formatDuration(3 * 3600 + 5 * 60)).toBe('3h05m');
    expect(formatProgressLine('sweep demo', 64, 256, 2.1)).toBe(
      'sweep demo: 64/256 points, 2.1 points/s, ETA 1m31s',
    );
    expect(formatProgressLine('sweep demo', 0, 256, 0)).toBe('sweep demo: 0/256 points');
  });

  it('prints a plain line at each 10 % and after 10 s without one, rate from points done since the start', () => {
    let t = 0;
    const { lines, stream } = sink();
    const p = createProgress({ label: 'sweep t', total: 100, stream, now: () => t });
    p.update(0);
    t = 5000;
    p.update(5); // 5 %, 5 s: nothing yet
    expect(lines).toEqual([]);
    t = 10_000;
    p.update(10); // 10 %: a line; 10 points in 10 s = 1 point/s, 90 left = 1m30s
    expect(lines).toEqual(['sweep t: 10/100 points, 1 points/s, ETA 1m30s']);
    t = 21_000;
    p.update(11); // 11 s since the last line
    expect(lines).toHaveLength(2);
    p.stop();
    expect(lines).toHaveLength(2); // nothing new since the last line
  });

  it('counts the rate from the first update, so resumed points do not inflate it', () => {
    let t = 0;
    const { lines, stream } = sink();
    const p = createProgress({ label: 's', total: 100, stream, now: () => t });
    p.update(50); // 50 resumed
    t = 10_000;
    p.update(60); // 10 new in 10 s: 1 point/s, 40 left: 40 s
    expect(lines.at(-1)).toBe('s: 60/100 points, 1 points/s, ETA 40s');
  });

  it('is silent when quiet', () => {
    const { lines, stream } = sink();
    const p = createProgress({ label: 's', total: 10, stream, quiet: true });
    for (let i = 0; i <= 10; i++) p.update(i);
    p.stop();
    expect(lines).toEqual([]);
  });

  it('the run line gives percent, stage and an ETA from the average pace: 25 % in 3 s leaves 9 s', () => {
    let t = 0;
    const { lines, stream } = sink();
    const r = createRunProgress({ label: 'run demo', stream, now: () => t });
    t = 3000;
    r.onProgress(0.25, 'driven run');
    expect(lines).toEqual(['run demo: 25 % (driven run), ETA 9s']);
  });
});
