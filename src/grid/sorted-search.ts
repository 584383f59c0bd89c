/**
 * Binary search in ascending typed arrays.
 */

/** First index of ascending `sorted` whose value is at least `value` (sorted.length when none). */
export function lowerBound(sorted: ArrayLike<number>, value: number): number {
  let lo = 0;
  let hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (sorted[mid]! < value) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Position of `value` in ascending `sorted`, or −1. */
export function indexOfSorted(sorted: ArrayLike<number>, value: number): number {
  const at = lowerBound(sorted, value);
  return at < sorted.length && sorted[at] === value ? at : -1;
}
