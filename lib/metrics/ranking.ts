import { assertBinaryLabels, assertFiniteValues, assertSameLength } from "./input-checks";

// Discrimination on labelled alerts. Labels exist only for alerts someone reviewed, so both numbers
// describe the model within the reviewed population, not over all transactions; screens must say so.

function checkInputs(scores: readonly number[], labels: readonly number[]): { positives: number; negatives: number } {
  assertSameLength(scores, labels, "scores", "labels");
  assertFiniteValues(scores, "scores");
  assertBinaryLabels(labels, "labels");
  const positives = labels.reduce((sum, y) => sum + y, 0);
  return { positives, negatives: labels.length - positives };
}

/** Indices sorted by score, highest first. */
function byScoreDescending(scores: readonly number[]): number[] {
  return scores.map((_, i) => i).sort((a, b) => scores[b] - scores[a]);
}

/**
 * Area under the ROC curve: the probability that a random fraud outranks a random legitimate
 * alert, with a tie counted as half (the Mann–Whitney U statistic over P·N). Computed from
 * average ranks after one sort, O(n log n), rather than from all P·N pairs. Equal to the trapezoid
 * area scikit-learn computes (sklearn/metrics/_ranking.py line 346). Null when only one class is
 * present, where the question has no answer.
 */
export function rocAuc(scores: readonly number[], labels: readonly number[]): number | null {
  const { positives, negatives } = checkInputs(scores, labels);
  if (positives === 0 || negatives === 0) return null;

  const order = byScoreDescending(scores);
  // Walk groups of tied scores from the top; each fraud in a group beats every legitimate alert
  // below the group and ties (half a win) with each legitimate alert inside it.
  let wins = 0;
  let negativesBelow = negatives;
  let i = 0;
  while (i < order.length) {
    let j = i;
    let groupPositives = 0;
    let groupNegatives = 0;
    while (j < order.length && scores[order[j]] === scores[order[i]]) {
      if (labels[order[j]] === 1) groupPositives += 1;
      else groupNegatives += 1;
      j += 1;
    }
    negativesBelow -= groupNegatives;
    wins += groupPositives * (negativesBelow + groupNegatives / 2);
    i = j;
  }
  return wins / (positives * negatives);
}

/**
 * Average precision as scikit-learn defines it (average_precision_score): the step-wise sum
 * Σ_n (R_n − R_{n−1})·P_n over the distinct score thresholds taken from the highest down, with no
 * interpolation (sklearn/metrics/_ranking.py line 213). Alerts with tied scores enter together at
 * one threshold, as in scikit-learn's _binary_clf_curve (line 783), so the result does not depend
 * on input order. Null when only one class is present (scikit-learn returns 1 or 0 with a warning).
 */
export function averagePrecision(scores: readonly number[], labels: readonly number[]): number | null {
  const { positives, negatives } = checkInputs(scores, labels);
  if (positives === 0 || negatives === 0) return null;

  const order = byScoreDescending(scores);
  let truePositives = 0;
  let flagged = 0;
  let ap = 0;
  let i = 0;
  while (i < order.length) {
    let j = i;
    let groupPositives = 0;
    while (j < order.length && scores[order[j]] === scores[order[i]]) {
      if (labels[order[j]] === 1) groupPositives += 1;
      j += 1;
    }
    flagged += j - i;
    truePositives += groupPositives;
    if (groupPositives > 0) ap += (groupPositives / positives) * (truePositives / flagged);
    i = j;
  }
  return ap;
}
