/**
 * Quantile of a numeric sample by linear interpolation between order statistics
 * (the "type 7" definition used by most statistics packages).
 *
 * @param values - sample (any order; not mutated). Non-finite values are ignored.
 * @param p - probability in [0, 1]
 * @returns the p-quantile, or NaN for an empty sample
 * @throws RangeError when p is outside [0, 1]
 *
 * Notes: h = (n − 1)·p, q = x₍⌊h⌋₎ + (h − ⌊h⌋)(x₍⌊h⌋+1₎ − x₍⌊h⌋₎) on the sorted sample.
 * References: Hyndman & Fan, "Sample quantiles in statistical packages", Am. Stat. 50:361 (1996), definition 7.
 * @example
 * quantile([1, 2, 3, 4], 0.5); // 2.5
 */
export function quantile(values: ArrayLike<number>, p: number): number {
  if (!(p >= 0 && p <= 1)) throw new RangeError(`quantile: p must be in [0, 1]; got ${p}`);
  const sorted = sortedFinite(values);
  return quantileSorted(sorted, p);
}

/** Quantile (type 7) of an already ascending-sorted, finite sample; NaN when empty. */
export function quantileSorted(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 0) return Number.NaN;
  const h = (n - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

/** Median (type-7 0.5 quantile) of the finite values; NaN when empty. */
export function median(values: ArrayLike<number>): number {
  return quantileSorted(sortedFinite(values), 0.5);
}

/**
 * Robust standard deviation from the median absolute deviation: 1.4826·median(|x − median|),
 * consistent for normally distributed data. NaN when empty.
 *
 * References: Rousseeuw & Croux, JASA 88:1273 (1993) (from memory).
 */
export function madSigma(values: ArrayLike<number>): number {
  const m = median(values);
  const dev: number[] = [];
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) dev.push(Math.abs(values[i] - m));
  return 1.482602218505602 * median(dev);
}

/** Copy of the finite values of `values`, sorted ascending. */
export function sortedFinite(values: ArrayLike<number>): Float64Array {
  let n = 0;
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) n++;
  const out = new Float64Array(n);
  let k = 0;
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) out[k++] = values[i];
  out.sort();
  return out;
}
