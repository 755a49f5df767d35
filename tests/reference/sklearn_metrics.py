"""Reference values for tests/metrics, computed by libraries outside this project.

Run with the system interpreter, which has scikit-learn, SciPy and numpy:

    /usr/bin/python3 tests/reference/sklearn_metrics.py [output.json]

It writes tests/reference/metrics-cases.json by default. The TypeScript tests compare our metric
functions with these outputs within 1e-9, and one test re-runs this script into a temporary file
and checks that the committed JSON is still what the libraries produce. The seed is fixed so the
output only changes when this script or a library version changes.

Sources of each value:
- roc_auc_score, average_precision_score, brier_score_loss, cohen_kappa_score, calibration_curve:
  scikit-learn.
- Wilson intervals: scipy.stats.binomtest(k, n).proportion_ci(method="wilson").
- ECE and PSI have no library function here; they are computed with plain numpy from their
  formulas (DESIGN.md section 4) as a second computation, written independently of the TypeScript.
"""

import json
import platform
import sys
from pathlib import Path

import numpy as np
import scipy
import sklearn
from scipy.stats import binomtest
from sklearn.calibration import calibration_curve
from sklearn.metrics import (
    average_precision_score,
    brier_score_loss,
    cohen_kappa_score,
    roc_auc_score,
)

SEED = 20240611
rng = np.random.default_rng(SEED)


def both_classes(labels):
    """Force at least one fraud and one legitimate label so AUC and AP are defined."""
    labels = labels.copy()
    labels[0], labels[1] = 1, 0
    return labels


def floats(a):
    return [float(x) for x in a]


def ints(a):
    return [int(x) for x in a]


# --- ranking: ROC AUC and average precision, with and without ties ------------------------------
ranking_cases = []
ranking_specs = [
    # (description, n, score generator, prevalence, decimals to round to after the shift or None)
    ("8 alerts, integer scores 0..3 (heavy ties)", 8, lambda n: rng.integers(0, 4, n).astype(float), 0.4, 0),
    ("25 alerts, scores rounded to 0.1", 25, lambda n: np.round(rng.uniform(0, 1, n), 1), 0.3, 1),
    ("60 alerts, scores rounded to 0.01, 10% fraud", 60, lambda n: np.round(rng.uniform(0, 1, n), 2), 0.1, 2),
    ("200 alerts, continuous scores", 200, lambda n: rng.normal(0, 1, n), 0.25, None),
    ("501 alerts, beta scores rounded to 0.1", 501, lambda n: np.round(rng.beta(2, 5, n), 1), 0.3, 1),
    ("1000 alerts, continuous scores, 2% fraud", 1000, lambda n: rng.normal(0, 1, n), 0.02, None),
]
for description, n, make_scores, prevalence, decimals in ranking_specs:
    labels = both_classes(rng.binomial(1, prevalence, n))
    # Shift fraud scores up a little so the scores carry signal, then round again to keep the ties.
    scores = make_scores(n) + 0.8 * labels * rng.uniform(0, 1, n)
    if decimals is not None:
        scores = np.round(scores, decimals)
    ranking_cases.append(
        {
            "description": description,
            "scores": floats(scores),
            "labels": ints(labels),
            "roc_auc_score": float(roc_auc_score(labels, scores)),
            "average_precision_score": float(average_precision_score(labels, scores)),
        }
    )

# --- calibration: reliability table (calibration_curve), Brier score, ECE -----------------------
calibration_cases = []
edge_values = np.array([0.0, 0.1, 0.2, 0.3, 0.5, 0.6, 0.7, 0.9, 1.0, 0.05, 0.15, 0.95])
calibration_specs = [
    ("12 alerts, p exactly on the bin edges", lambda n: edge_values, 12, lambda p: p),
    ("30 alerts, uniform p, calibrated", lambda n: rng.uniform(0, 1, n), 30, lambda p: p),
    ("100 alerts, p skewed low, under-predicting", lambda n: rng.beta(0.5, 5, n), 100, lambda p: np.minimum(1, 1.5 * p)),
    ("250 alerts, p rounded to 0.1 (all on edges)", lambda n: np.round(rng.uniform(0, 1, n), 1), 250, lambda p: p),
    ("500 alerts, p rounded to 0.01, over-predicting", lambda n: np.round(rng.uniform(0, 1, n), 2), 500, lambda p: p**2),
    ("1000 alerts, beta(2, 2) p", lambda n: rng.beta(2, 2, n), 1000, lambda p: p),
]
for description, make_p, n, true_rate in calibration_specs:
    p = make_p(n)
    y = both_classes(rng.binomial(1, true_rate(p)))
    prob_true, prob_pred = calibration_curve(y, p, n_bins=10, strategy="uniform")
    # Second computation of ECE (no library function): the same uniform edges as calibration_curve,
    # bin counts by np.digitize with right=True, i.e. bins (lower, upper].
    edges = np.linspace(0.0, 1.0, 11)
    counts = np.bincount(np.digitize(p, edges[1:-1], right=True), minlength=10)
    counts = counts[counts != 0]
    ece = float(np.sum(counts / len(p) * np.abs(prob_true - prob_pred)))
    calibration_cases.append(
        {
            "description": description,
            "p": floats(p),
            "y": ints(y),
            "calibration_curve": {"prob_true": floats(prob_true), "prob_pred": floats(prob_pred)},
            "nonempty_bin_counts_numpy": ints(counts),
            "brier_score_loss": float(brier_score_loss(y, p)),
            "ece_numpy": ece,
        }
    )

# --- Cohen's kappa ------------------------------------------------------------------------------
kappa_cases = []
outcomes = np.array(["confirmed_fraud", "legitimate", "inconclusive"])
kappa_specs = [
    ("5 pairs, three outcomes", 5, 3, 0.6),
    ("20 pairs, three outcomes", 20, 3, 0.7),
    ("50 pairs, two outcomes", 50, 2, 0.8),
    ("120 pairs, three outcomes", 120, 3, 0.5),
    ("400 pairs, three outcomes, close agreement", 400, 3, 0.9),
    ("1000 pairs, three outcomes, chance agreement", 1000, 3, 0.0),
]
for description, n, k, agree in kappa_specs:
    first = outcomes[rng.integers(0, k, n)]
    second = np.where(rng.uniform(0, 1, n) < agree, first, outcomes[rng.integers(0, k, n)])
    first[0], second[0] = outcomes[0], outcomes[1]  # never a degenerate single-outcome case
    kappa_cases.append(
        {
            "description": description,
            "first": [str(x) for x in first],
            "second": [str(x) for x in second],
            "cohen_kappa_score": float(cohen_kappa_score(first, second)),
        }
    )

# --- Wilson score intervals (SciPy) ---------------------------------------------------------------
wilson_inputs = [(81, 263), (15, 148), (0, 20), (1, 29), (3, 10), (10, 10), (0, 1), (1, 1)]
for _ in range(6):
    n = int(rng.integers(1, 2000))
    wilson_inputs.append((int(rng.integers(0, n + 1)), n))
wilson_cases = []
for k, n in wilson_inputs:
    ci = binomtest(k, n).proportion_ci(confidence_level=0.95, method="wilson")
    wilson_cases.append({"successes": k, "trials": n, "lower": float(ci.low), "upper": float(ci.high)})

# --- Population stability index (numpy, from the formula) ------------------------------------------
EMPTY_BIN_SHARE = 1e-4


def psi_numpy(reference, current, bins=10):
    # Inner edges at the reference quantiles (numpy's default linear interpolation), duplicates
    # collapsed; outer bins open; bins (lower, upper] via searchsorted side="left"; empty shares
    # floored at 1e-4 in the sum only.
    edges = np.unique(np.quantile(reference, np.arange(1, bins) / bins))
    e = np.bincount(np.searchsorted(edges, reference, side="left"), minlength=len(edges) + 1) / len(reference)
    a = np.bincount(np.searchsorted(edges, current, side="left"), minlength=len(edges) + 1) / len(current)
    e_used = np.where(e == 0, EMPTY_BIN_SHARE, e)
    a_used = np.where(a == 0, EMPTY_BIN_SHARE, a)
    return float(np.sum((a_used - e_used) * np.log(a_used / e_used))), edges, e, a


psi_cases = []
psi_specs = [
    ("1000 vs 800 normal scores, shifted by 0.3 sd", rng.normal(0, 1, 1000), rng.normal(0.3, 1, 800)),
    ("500 vs 500 scores rounded to 0.1 (tied edges)", np.round(rng.beta(2, 5, 500), 1), np.round(rng.beta(2, 4, 500), 1)),
    ("40 vs 25 uniform scores, current above the reference range in part", rng.uniform(0, 1, 40), rng.uniform(0.5, 1.5, 25)),
]
for description, reference, current in psi_specs:
    psi, edges, e, a = psi_numpy(reference, current)
    psi_cases.append(
        {
            "description": description,
            "reference": floats(reference),
            "current": floats(current),
            "inner_edges": floats(edges),
            "expected_shares": floats(e),
            "actual_shares": floats(a),
            "psi": psi,
        }
    )

result = {
    "generated_by": "tests/reference/sklearn_metrics.py",
    "seed": SEED,
    "versions": {
        "python": platform.python_version(),
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "scikit-learn": sklearn.__version__,
    },
    "ranking": ranking_cases,
    "calibration": calibration_cases,
    "kappa": kappa_cases,
    "wilson": wilson_cases,
    "psi": psi_cases,
}

out = Path(sys.argv[1]) if len(sys.argv) > 1 else Path(__file__).with_name("metrics-cases.json")
out.write_text(json.dumps(result, indent=1, allow_nan=False) + "\n")
