/**
 * The order of the points of a sweep, shared by every per-point array it writes (the
 * indices of points.jsonl, the metrics, classes and masks of map.json): row-major over
 * the axes, the last axis varying fastest, so for axes of lengths n_0..n_{k-1},
 * index = ((i_0 n_1 + i_1) n_2 + i_2) ... An index depends only on the axes, never on the
 * order in which points finish.
 */

/** Anything with an axis's values (a MapAxis, a grid axis). */
export type Axes = readonly { readonly values: readonly unknown[] }[];

/** Number of points: the product of the axis lengths (1 for no axes). */
export function pointCount(axes: Axes): number {
  return axes.reduce((n, a) => n * a.values.length, 1);
}

/** Row-major strides: moving one step along axis k moves the flat index by strides[k]. */
export function axisStrides(axes: Axes): number[] {
  const s = new Array<number>(axes.length).fill(1);
  for (let k = axes.length - 2; k >= 0; k--) s[k] = s[k + 1] * axes[k + 1].values.length;
  return s;
}

/** The index along each axis of the point at a flat index. Throws RangeError outside 0..count-1. */
export function axisIndices(axes: Axes, index: number): number[] {
  const total = pointCount(axes);
  if (!Number.isInteger(index) || index < 0 || index >= total)
    throw new RangeError(`point index ${index} outside 0..${total - 1}`);
  const out = new Array<number>(axes.length);
  let rest = index;
  for (let k = axes.length - 1; k >= 0; k--) {
    const n = axes[k].values.length;
    out[k] = rest % n;
    rest = Math.floor(rest / n);
  }
  return out;
}

/** The value of every axis at a flat index, by key. */
export function axisValuesAt(
  axes: readonly { readonly key: string; readonly values: readonly number[] }[],
  index: number,
): Record<string, number> {
  const idx = axisIndices(axes, index);
  const out: Record<string, number> = {};
  axes.forEach((a, k) => {
    out[a.key] = a.values[idx[k]];
  });
  return out;
}
