import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { describe, expect, it } from "vitest";
import {
  averagePrecision,
  brierScore,
  cohenKappa,
  expectedCalibrationError,
  populationStabilityIndex,
  reliabilityTable,
  rocAuc,
  wilsonInterval,
} from "@/lib/metrics";

// Randomised cases computed outside this project by tests/reference/sklearn_metrics.py:
// scikit-learn 1.2.1 (roc_auc_score, average_precision_score, brier_score_loss, cohen_kappa_score,
// calibration_curve), SciPy 1.10.1 (binomtest(k, n).proportion_ci(method="wilson")) and, for ECE
// and PSI which have no library function there, plain numpy from the formulas. Library versions
// are recorded in the JSON itself.

type ReferenceCases = {
  versions: Record<string, string>;
  ranking: { description: string; scores: number[]; labels: number[]; roc_auc_score: number; average_precision_score: number }[];
  calibration: {
    description: string;
    p: number[];
    y: number[];
    calibration_curve: { prob_true: number[]; prob_pred: number[] };
    nonempty_bin_counts_numpy: number[];
    brier_score_loss: number;
    ece_numpy: number;
  }[];
  kappa: { description: string; first: string[]; second: string[]; cohen_kappa_score: number }[];
  wilson: { successes: number; trials: number; lower: number; upper: number }[];
  psi: {
    description: string;
    reference: number[];
    current: number[];
    inner_edges: number[];
    expected_shares: number[];
    actual_shares: number[];
    psi: number;
  }[];
};

const referenceDir = path.resolve(__dirname, "../reference");
const casesPath = path.join(referenceDir, "metrics-cases.json");
const scriptPath = path.join(referenceDir, "sklearn_metrics.py");
const cases = JSON.parse(readFileSync(casesPath, "utf8")) as ReferenceCases;

const TOLERANCE = 1e-9;
function expectWithin(actual: number | null, expected: number, what: string): void {
  expect(actual, what).not.toBeNull();
  expect(Math.abs((actual as number) - expected), `${what}: ${actual} vs ${expected}`).toBeLessThanOrEqual(TOLERANCE);
}

describe("metrics agree with scikit-learn, SciPy and numpy on randomised cases", () => {
  it("covers the intended libraries and enough cases", () => {
    expect(Object.keys(cases.versions).sort()).toEqual(["numpy", "python", "scikit-learn", "scipy"]);
    expect(cases.ranking.length).toBeGreaterThanOrEqual(6);
    expect(cases.calibration.length).toBeGreaterThanOrEqual(6);
    expect(cases.kappa.length).toBeGreaterThanOrEqual(6);
    expect(cases.wilson.length).toBeGreaterThanOrEqual(6);
  });

  it.each(cases.ranking.map((c) => [c.description, c] as const))(
    "ROC AUC and average precision: %s",
    (_description, c) => {
      expectWithin(rocAuc(c.scores, c.labels), c.roc_auc_score, "roc_auc_score");
      expectWithin(averagePrecision(c.scores, c.labels), c.average_precision_score, "average_precision_score");
    },
  );

  it.each(cases.calibration.map((c) => [c.description, c] as const))(
    "reliability table, Brier score and ECE: %s",
    (_description, c) => {
      // scikit-learn drops empty bins (sklearn/calibration.py lines 1038–1040); compare the rest.
      const nonEmpty = reliabilityTable(c.p, c.y, 10).filter((b) => b.n > 0);
      expect(nonEmpty.map((b) => b.n)).toEqual(c.nonempty_bin_counts_numpy);
      expect(nonEmpty).toHaveLength(c.calibration_curve.prob_true.length);
      nonEmpty.forEach((bin, i) => {
        expectWithin(bin.observedRate, c.calibration_curve.prob_true[i], `prob_true[${i}]`);
        expectWithin(bin.meanPredicted, c.calibration_curve.prob_pred[i], `prob_pred[${i}]`);
      });
      expectWithin(brierScore(c.p, c.y), c.brier_score_loss, "brier_score_loss");
      expectWithin(expectedCalibrationError(c.p, c.y, 10), c.ece_numpy, "ECE (numpy)");
    },
  );

  it.each(cases.kappa.map((c) => [c.description, c] as const))("Cohen's kappa: %s", (_description, c) => {
    const pairs = c.first.map((a, i) => [a, c.second[i]] as const);
    expectWithin(cohenKappa(pairs), c.cohen_kappa_score, "cohen_kappa_score");
  });

  it("Wilson intervals match SciPy's binomtest(k, n).proportion_ci(method='wilson')", () => {
    for (const c of cases.wilson) {
      const ci = wilsonInterval(c.successes, c.trials);
      expectWithin(ci.lower, c.lower, `${c.successes}/${c.trials} lower`);
      expectWithin(ci.upper, c.upper, `${c.successes}/${c.trials} upper`);
    }
  });

  it.each(cases.psi.map((c) => [c.description, c] as const))("population stability index: %s", (_description, c) => {
    const result = populationStabilityIndex(c.reference, c.current, 10);
    const innerEdges = result.bins.slice(1).map((b) => b.lower);
    expect(innerEdges).toHaveLength(c.inner_edges.length);
    innerEdges.forEach((edge, i) => expectWithin(edge, c.inner_edges[i], `edge ${i}`));
    result.bins.forEach((bin, i) => {
      expectWithin(bin.expectedShare, c.expected_shares[i], `expected share ${i}`);
      expectWithin(bin.actualShare, c.actual_shares[i], `actual share ${i}`);
    });
    expectWithin(result.psi, c.psi, "psi");
  });
});

// The committed JSON must be what the libraries produce today. This needs the system Python with
// scikit-learn, which not every machine has (the python3 on PATH here lacks it), so the test is
// skipped where it cannot run rather than failing for a reason unrelated to our code.
const systemPython = "/usr/bin/python3";
const referenceLibrariesAvailable =
  spawnSync(systemPython, ["-c", "import numpy, scipy, sklearn"], { stdio: "ignore" }).status === 0;

describe("reference script", () => {
  it.skipIf(!referenceLibrariesAvailable)(
    "re-creates the committed metrics-cases.json exactly",
    () => {
      const dir = mkdtempSync(path.join(tmpdir(), "metrics-cases-"));
      try {
        const out = path.join(dir, "metrics-cases.json");
        const run = spawnSync(systemPython, [scriptPath, out], { encoding: "utf8" });
        expect(run.status, run.stderr).toBe(0);
        expect(JSON.parse(readFileSync(out, "utf8"))).toEqual(cases);
      } finally {
        rmSync(dir, { recursive: true, force: true });
      }
    },
    60_000,
  );
});
