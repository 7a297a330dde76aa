/**
 * Progress on stderr for long commands. On an interactive terminal (stderr a TTY and CI
 * unset) a cli-progress bar with count, rate and ETA; otherwise a plain line now and then
 * (every ~10 s or every 10 % of the work), which reads well in log files; nothing at all
 * when quiet or under a CI runner (CI set). stdout is never touched, so piped results stay clean.
 */
import { SingleBar } from 'cli-progress';

/** True under a CI runner (CI set and not 'false'): long work then stays quiet. */
export function underCI(env: NodeJS.ProcessEnv = process.env): boolean {
  return env.CI !== undefined && env.CI !== '' && env.CI !== 'false';
}

/** True when a live bar may be drawn: the stream is a TTY and CI is unset or empty. */
export function interactive(
  stream: { isTTY?: boolean } = process.stderr,
  env: NodeJS.ProcessEnv = process.env,
): boolean {
  return stream.isTTY === true && (env.CI === undefined || env.CI === '' || env.CI === 'false');
}

/** A duration for people: "45s", "1m30s", "2h05m", "3d04h"; "?" for unknown. */
export function formatDuration(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds < 0) return '?';
  const s = Math.round(seconds);
  if (s < 60) return `${s}s`;
  const m = Math.floor(s / 60);
  if (m < 60) return `${m}m${String(s % 60).padStart(2, '0')}s`;
  const h = Math.floor(m / 60);
  if (h < 48) return `${h}h${String(m % 60).padStart(2, '0')}m`;
  return `${Math.floor(h / 24)}d${String(h % 24).padStart(2, '0')}h`;
}

/** A rate with about two significant figures: 2.1, 0.035, 140. */
function formatRate(r: number): string {
  if (!Number.isFinite(r) || r <= 0) return '0';
  return r >= 100 ? r.toFixed(0) : Number(r.toPrecision(2)).toString();
}

/**
 * The plain progress line: "sweep demo: 64/256 points, 2.1 points/s, ETA 1m30s".
 * Rate in units per second; the ETA is left out while the rate is unknown (nothing done yet).
 */
export function formatProgressLine(
  label: string,
  done: number,
  total: number,
  ratePerS: number,
  unit = 'points',
  upper?: number,
): string {
  const growing = upper !== undefined && upper > total;
  const parts = [`${label}: ${done}/${total} ${unit}${growing ? ` planned so far (at most ${upper})` : ''}`];
  if (ratePerS > 0 && Number.isFinite(ratePerS)) {
    parts.push(`${formatRate(ratePerS)} ${unit}/s`);
    if (done < total || growing) parts.push(`ETA ${etaText(done, total, ratePerS, upper)}`);
  }
  return parts.join(', ');
}

/**
 * The time left at `ratePerS`: one figure for a fixed total, a range "2m10s to 9m40s" when
 * the plan may still grow to `upper` (a refining map), so the ETA never claims more than known.
 */
export function etaText(done: number, total: number, ratePerS: number, upper?: number): string {
  // nothing finished yet (the references run first): no pace to extrapolate
  if (!(ratePerS > 0)) return 'estimating';
  const low = formatDuration(Math.max(0, total - done) / ratePerS);
  if (upper === undefined || upper <= total) return low;
  return `${low} to ${formatDuration((upper - done) / ratePerS)}`;
}

export interface ProgressOptions {
  /** "sweep demo" */
  label: string;
  total: number;
  unit?: string;
  quiet?: boolean;
  stream?: NodeJS.WriteStream;
  /** force the plain lines even on a terminal (tests) */
  plain?: boolean;
  /** seconds between plain lines; default 10 */
  intervalS?: number;
  /** clock in ms (tests) */
  now?: () => number;
}

/** Reports a count of finished items; `log` prints a message without breaking the bar. */
export interface ProgressReporter {
  /**
   * `done` items finished of `total` (the total may change, e.g. after a resume count, or
   * grow while a map refines); `upper`: the most the total may still grow to
   */
  update(done: number, total?: number, upper?: number): void;
  log(message: string): void;
  /** the final line (plain) or the finished bar; idempotent */
  stop(): void;
}

/**
 * A progress reporter (see the module comment). The rate counts only the items finished
 * since the first update (points kept by --resume do not inflate it).
 */
export function createProgress(opts: ProgressOptions): ProgressReporter {
  const stream = opts.stream ?? process.stderr;
  const unit = opts.unit ?? 'points';
  const now = opts.now ?? (() => Date.now());
  let total = opts.total;
  if (opts.quiet || (!opts.plain && opts.stream === undefined && underCI())) {
    return { update: () => undefined, log: (m) => void stream.write(`${m}\n`), stop: () => undefined };
  }
  const t0 = now();
  let first: number | null = null;
  let done = 0;
  let upper: number | undefined;
  let stopped = false;
  const rate = () => {
    const dt = (now() - t0) / 1000;
    return first === null || dt <= 0 ? 0 : (done - first) / dt;
  };
  // bar and plain lines take an update alike, so that both show the same rate
  const take = (d: number, t: number | undefined, u: number | undefined) => {
    if (first === null) first = d;
    done = d;
    if (t !== undefined) total = t;
    upper = u;
  };

  if (!opts.plain && interactive(stream)) {
    const bar = new SingleBar({
      stream,
      format: `${opts.label} [{bar}] {value}/{total} ${unit}{bound} | {rate} ${unit}/s | ETA {eta_text}`,
      hideCursor: true,
      clearOnComplete: false,
      stopOnComplete: false,
      etaBuffer: 20,
      fps: 5,
    });
    // Started on the first update, when the total is known (a resume counts first).
    let started = false;
    const payload = () => {
      const r = rate();
      return {
        rate: formatRate(r),
        eta_text: etaText(done, total, r, upper),
        bound: upper !== undefined && upper > total ? ` planned so far (at most ${upper})` : '',
      };
    };
    return {
      update(d, t, u) {
        if (stopped) return;
        take(d, t, u);
        if (!started) {
          started = true;
          bar.start(total, d, payload());
          return;
        }
        bar.setTotal(total);
        bar.update(d, payload());
      },
      log(message) {
        stream.write(`\r\u001b[K${message}\n`);
        if (started && !stopped) bar.update(done, payload());
      },
      stop() {
        if (stopped) return;
        stopped = true;
        if (!started) return;
        bar.update(done, payload());
        bar.stop();
      },
    };
  }

  const interval = (opts.intervalS ?? 10) * 1000;
  let lastAt = t0;
  let lastTenth = 0;
  let lastPrinted = -1;
  const print = () => {
    lastAt = now();
    lastPrinted = done;
    stream.write(`${formatProgressLine(opts.label, done, total, rate(), unit, upper)}\n`);
  };
  return {
    update(d, t, u) {
      if (stopped) return;
      take(d, t, u);
      const tenth = total > 0 ? Math.floor((10 * done) / total) : 10;
      if (now() - lastAt >= interval || tenth > lastTenth) {
        lastTenth = tenth;
        print();
      }
    },
    log(message) {
      stream.write(`${message}\n`);
    },
    stop() {
      if (stopped) return;
      stopped = true;
      if (lastPrinted !== done) print();
    },
  };
}

/** What the run command's progress helper hands to runScenario and back to the command. */
export interface RunProgress {
  /** pass as RunOptions.onProgress: fraction 0..1 done and what is being done */
  onProgress: (fraction: number, what: string) => void;
  stop(): void;
}

/**
 * Progress of one run ("run demo: 40 % (driven run), ETA 12s"): a bar in percent on an
 * interactive terminal, else a plain line every ~10 s or 10 %, nothing when quiet.
 * The ETA assumes the rest goes at the average pace so far.
 */
export function createRunProgress(opts: {
  label: string;
  quiet?: boolean;
  stream?: NodeJS.WriteStream;
  plain?: boolean;
  intervalS?: number;
  now?: () => number;
}): RunProgress {
  const stream = opts.stream ?? process.stderr;
  const now = opts.now ?? (() => Date.now());
  if (opts.quiet || (!opts.plain && opts.stream === undefined && underCI()))
    return { onProgress: () => undefined, stop: () => undefined };
  const t0 = now();
  const eta = (f: number) => {
    const dt = (now() - t0) / 1000;
    return f > 0 && f < 1 ? formatDuration((dt * (1 - f)) / f) : 'estimating';
  };
  let stopped = false;
  if (!opts.plain && interactive(stream)) {
    const bar = new SingleBar({
      stream,
      format: `${opts.label} [{bar}] {percentage} % | {what} | ETA {eta_text}`,
      hideCursor: true,
      clearOnComplete: false,
      fps: 5,
    });
    bar.start(1000, 0, { what: '', eta_text: 'estimating' });
    return {
      onProgress(f, what) {
        if (!stopped) bar.update(Math.round(Math.min(1, Math.max(0, f)) * 1000), { what, eta_text: eta(f) });
      },
      stop() {
        if (stopped) return;
        stopped = true;
        bar.stop();
      },
    };
  }
  const interval = (opts.intervalS ?? 10) * 1000;
  let lastAt = t0;
  let lastTenth = 0;
  let last = '';
  return {
    onProgress(f, what) {
      if (stopped) return;
      const tenth = Math.floor(Math.min(1, Math.max(0, f)) * 10);
      if (now() - lastAt >= interval || tenth > lastTenth) {
        lastAt = now();
        lastTenth = tenth;
        const e = f < 1 ? `, ETA ${eta(f)}` : '';
        last = `${opts.label}: ${Math.round(f * 100)} % (${what})${e}`;
        stream.write(`${last}\n`);
      }
    },
    stop() {
      stopped = true;
    },
  };
}
