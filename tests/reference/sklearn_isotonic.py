"""Reference cases for lib/risk/isotonic-calibration.ts, computed by scikit-learn.

Fits sklearn.isotonic.IsotonicRegression(increasing=True, out_of_bounds="clip") on randomised
(score, label) sets drawn from a fixed numpy seed and writes the inputs, the fitted thresholds and
predictions at query points inside and outside the fitted range to isotonic-cases.json.

Run with the system interpreter, which has scikit-learn:
    /usr/bin/python3 tests/reference/sklearn_isotonic.py [output-path]
The output is deterministic for a given scikit-learn/numpy build, so tests/risk re-runs this
script and compares with the committed JSON to catch a stale fixture.
"""

import json
import sys
from pathlib import Path

import numpy as np
import sklearn
from sklearn.isotonic import IsotonicRegression

SEED = 20150601


def make_case(
    rng, name, n, *, decimals=None, positive_rate=None, weighted=False, near_ties=False, single_score=False
):
    """Scores in [0, 1) with labels that become more likely to be 1 as the score grows."""
    scores = rng.uniform(0.0, 1.0, size=n)
    if single_score:
        # One distinct score: scikit-learn falls back to a constant prediction (one threshold).
        scores = np.full(n, scores[0])
    if decimals is not None:
        # Rounding creates many exactly tied scores, as a model that outputs few distinct values does.
        scores = np.round(scores, decimals)
    if near_ties:
        # Scores a few ulps apart: scikit-learn merges x values closer than finfo(float64).resolution
        # (1e-15) to the first x of a run, so 0, 6e-16 and 1.2e-15 form two groups, not one chain.
        offsets = rng.choice([0.0, 1e-16, 4e-16, 6e-16, 1.2e-15, 2e-15], size=n)
        scores = scores + offsets
    if positive_rate is None:
        labels = (rng.uniform(0.0, 1.0, size=n) < scores**2).astype(np.float64)
    else:
        labels = np.full(n, positive_rate, dtype=np.float64)
    if single_score:
        # Mixed labels on the one score, so the constant is a genuine average (3 of 7 here).
        labels = (np.arange(n) % 3 == 0).astype(np.float64)
    weights = None
    if weighted:
        # Inverse inclusion probabilities for a below-the-line sample, plus a few zero weights.
        weights = 1.0 / rng.choice([1.0, 0.3, 0.07, 0.5], size=n)
        weights[rng.choice(n, size=max(1, n // 10), replace=False)] = 0.0

    model = IsotonicRegression(increasing=True, out_of_bounds="clip")
    model.fit(scores, labels, sample_weight=weights)

    lo, hi = float(np.min(scores)), float(np.max(scores))
    queries = np.concatenate(
        [
            rng.uniform(lo, hi, size=25),  # inside the fitted range
            model.X_thresholds_[: min(5, len(model.X_thresholds_))],  # exactly on knots
            [lo - 0.5, lo - 1e-9, hi + 1e-9, hi + 0.5, -3.0, 4.0],  # outside: clipped
        ]
    )
    predictions = model.predict(queries)

    return {
        "name": name,
        "scores": scores.tolist(),
        "labels": [int(v) for v in labels],
        "weights": None if weights is None else weights.tolist(),
        "X_thresholds_": model.X_thresholds_.tolist(),
        "y_thresholds_": model.y_thresholds_.tolist(),
        "queries": queries.tolist(),
        "predictions": predictions.tolist(),
    }


def build_cases():
    rng = np.random.RandomState(SEED)
    return [
        make_case(rng, "five distinct scores", 5),
        make_case(rng, "forty scores rounded to one decimal (many ties)", 40, decimals=1),
        make_case(rng, "two hundred scores rounded to two decimals", 200, decimals=2),
        make_case(rng, "two thousand scores, continuous", 2000),
        make_case(rng, "all labels 0", 60, decimals=2, positive_rate=0.0),
        make_case(rng, "all labels 1", 60, decimals=2, positive_rate=1.0),
        make_case(rng, "weighted below-the-line sample with zero weights", 300, decimals=2, weighted=True),
        make_case(rng, "weighted, continuous", 1000, weighted=True),
        make_case(rng, "scores a few ulps apart", 500, decimals=2, near_ties=True),
        make_case(rng, "one distinct score", 7, single_score=True),
    ]


def main():
    default = Path(__file__).with_name("isotonic-cases.json")
    out = Path(sys.argv[1]) if len(sys.argv) > 1 else default
    document = {
        "generator": "tests/reference/sklearn_isotonic.py",
        "sklearn_version": sklearn.__version__,
        "numpy_version": np.__version__,
        "seed": SEED,
        "estimator": 'IsotonicRegression(increasing=True, out_of_bounds="clip")',
        "cases": build_cases(),
    }
    out.write_text(json.dumps(document, indent=1) + "\n")


if __name__ == "__main__":
    main()
