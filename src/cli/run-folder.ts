/**
 * Write one run's folder: summary.json, traces.json/.csv, spectra.json/.csv,
 * static_curve.json (RUN_FILES), then report.html by the report room from those files
 * (the report never re-simulates). Shared by `run` and `batch`.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import type { RunArtifacts } from '../results/artifacts';
import { RUN_FILES } from '../results/artifacts';
import { spectraSetToCsv, traceSetToCsv } from '../analysis/csv';
import { writeRunReport } from '../report/run-report';
import { writeResultMarker } from '../results/marker';

/** Write the folder; returns the path of report.html, or null with the reason printed if the report failed. */
export function writeRunFolder(dir: string, a: RunArtifacts, label = 'dithercav'): string | null {
  writeResultMarker(dir, 'run');
  const put = (name: string, v: unknown) =>
    fs.writeFileSync(path.join(dir, name), `${JSON.stringify(v, null, 1)}\n`);
  if (a.traces) {
    put(RUN_FILES.traces, a.traces);
    fs.writeFileSync(path.join(dir, RUN_FILES.tracesCsv), traceSetToCsv(a.traces));
  }
  if (a.spectra) {
    put(RUN_FILES.spectra, a.spectra);
    fs.writeFileSync(path.join(dir, RUN_FILES.spectraCsv), spectraSetToCsv(a.spectra));
  }
  if (a.static_curve) put(RUN_FILES.staticCurve, a.static_curve);
  if (a.speed_curve) put(RUN_FILES.speedCurve, a.speed_curve);
  put(RUN_FILES.summary, a.summary);
  try {
    return writeRunReport(dir);
  } catch (err) {
    // The results are saved; a report that fails is rebuilt later with `dithercav report`.
    process.stderr.write(`${label}: ${dir}: report.html could not be written: ${(err as Error).message}\n`);
    return null;
  }
}
