/**
 * The thread `dithercav run` simulates on, so that the main thread stays free to answer
 * Ctrl-C (a run on the main thread would not see the signal until it finished). Receives
 * the scenario and run options in workerData, posts progress and then the artifacts.
 * Loaded from the compiled dist/cli/run-thread.js.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { runScenarioThreaded } from '../simulate/parallel-run';
import type { EngineChoice } from '../simulate/run';
import type { RunArtifacts } from '../results/artifacts';
import type { Scenario } from '../scenario/schema';
import type { SpeedCurve } from '../results/speed-curve';
import { InputError } from '../scenario/errors';
import type { InputProblem } from '../scenario/errors';

/** What the main thread sends. */
export interface RunThreadInput {
  scenario: Scenario;
  engine?: EngineChoice;
  seed?: number;
  /** a speed curve from an earlier run in the output folder (reused if its key matches) */
  speedCurve?: SpeedCurve | null;
  /** threads for the static reference and the driven lanes (parallel-run.ts) */
  threads: number;
}

/** What the thread posts back. */
export type RunThreadMessage =
  | { type: 'progress'; fraction: number; label: string }
  | { type: 'done'; artifacts: RunArtifacts }
  | { type: 'error'; message: string; stack: string | null }
  | { type: 'input-error'; file: string | null; problems: InputProblem[] };

if (parentPort) {
  const port = parentPort;
  const input = workerData as RunThreadInput;
  let lastLabel = '';
  let lastAt = 0;
  runScenarioThreaded(input.scenario, {
    engine: input.engine,
    seed: input.seed,
    speedCurve: input.speedCurve ?? null,
    threads: input.threads,
    onProgress: (fraction, label) => {
      // at most ten messages a second, and every change of phase
      const now = Date.now();
      if (label === lastLabel && now - lastAt < 100) return;
      lastLabel = label;
      lastAt = now;
      port.postMessage({ type: 'progress', fraction, label } satisfies RunThreadMessage);
    },
  }).then(
    (artifacts) => port.postMessage({ type: 'done', artifacts } satisfies RunThreadMessage),
    (err: unknown) =>
      port.postMessage(
        err instanceof InputError
          ? ({ type: 'input-error', file: err.file, problems: err.problems } satisfies RunThreadMessage)
          : ({
              type: 'error',
              message: err instanceof Error ? err.message : String(err),
              stack: err instanceof Error ? (err.stack ?? null) : null,
            } satisfies RunThreadMessage),
      ),
  );
}
