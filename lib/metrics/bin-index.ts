/**
 * Index of the bin that holds `value`, given the sorted inner edges between bins: the number of
 * inner edges strictly below the value. Bins are therefore closed on the right, (lower, upper],
 * and the first bin also takes everything at or below its upper edge. This is numpy's
 * `searchsorted(inner_edges, value, side="left")`, which scikit-learn's calibration_curve uses
 * (sklearn/calibration.py line 1032); matching it keeps our tables comparable with theirs even for
 * values that sit exactly on an edge.
 */
export function binIndex(innerEdges: readonly number[], value: number): number {
  let lo = 0;
  let hi = innerEdges.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (innerEdges[mid] < value) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}
