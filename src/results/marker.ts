/**
 * The marker file every result folder gets (run, sweep, batch, merge, compare): a short
 * text saying the folder holds dithercav results. `batch` never reads a folder holding
 * it as input, so results written inside the folder a batch searches (its own output
 * above all) are never taken for scenarios.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { FOLDER_FILES, RESULT_VERSION } from './files';
import { TOOL_VERSION } from '../version';

export type ResultFolderKind = 'run' | 'sweep' | 'batch' | 'compare';

/** The first line of every marker: what it is, for a person who finds it. */
export const MARKER_FIRST_LINE = 'This folder holds dithercav results (not scenarios).';

/** Write (or rewrite) the marker of `dir`, creating the folder. */
export function writeResultMarker(dir: string, kind: ResultFolderKind): void {
  fs.mkdirSync(dir, { recursive: true });
  fs.writeFileSync(
    path.join(dir, FOLDER_FILES.marker),
    `${MARKER_FIRST_LINE}\nkind: ${kind}\nversion: ${RESULT_VERSION}\ntool_version: ${TOOL_VERSION}\n` +
      '`dithercav batch` does not search this folder for scenario files.\n',
  );
}

/** True when `dir` holds a result marker. */
export function hasResultMarker(dir: string): boolean {
  try {
    return fs.statSync(path.join(dir, FOLDER_FILES.marker)).isFile();
  } catch {
    return false;
  }
}
