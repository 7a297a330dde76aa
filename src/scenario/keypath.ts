/**
 * Key paths as users write them: `laser.output_coupler.reflectivity`, `sweep.axes[1].key`.
 * The same text names a key in error messages, in sweep axes and in `withOverrides`.
 */

/** The key paths of the drive's amplitude and frequency: the two axes of a stability map. */
export const AMPLITUDE_KEY = 'drive.amplitude';
export const FREQUENCY_KEY = 'drive.frequency';

/** One step of a key path: a mapping key or a list index. */
export type PathSegment = string | number;

/**
 * Dot form of a path: ['sweep', 'axes', 1, 'key'] -> "sweep.axes[1].key"; [] -> "".
 * Numbers are list indices and are written in brackets.
 */
export function formatKeyPath(path: readonly PropertyKey[]): string {
  let out = '';
  for (const seg of path) {
    if (typeof seg === 'number') out += `[${seg}]`;
    else out += out === '' ? String(seg) : `.${String(seg)}`;
  }
  return out;
}

/**
 * Parse the dot form back: "sweep.axes[1].key" -> ['sweep', 'axes', 1, 'key'].
 * Returns null for text that is not a key path (empty segments, unclosed brackets).
 */
export function parseKeyPath(text: string): PathSegment[] | null {
  const out: PathSegment[] = [];
  const re = /([^.[\]]+)|\[(\d+)\]|(\.)/gy;
  let expectKey = true;
  let m: RegExpExecArray | null;
  let pos = 0;
  while (pos < text.length) {
    re.lastIndex = pos;
    m = re.exec(text);
    if (m === null) return null;
    if (m[1] !== undefined) {
      if (!expectKey) return null;
      out.push(m[1]);
      expectKey = false;
    } else if (m[2] !== undefined) {
      if (expectKey) return null;
      out.push(Number(m[2]));
    } else {
      if (expectKey) return null;
      expectKey = true;
    }
    pos = re.lastIndex;
  }
  if (expectKey || out.length === 0) return null;
  return out;
}
