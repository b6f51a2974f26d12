#!/usr/bin/python3
"""Capture scikit-learn's own console output of MLPClassifier(verbose=True),
with and without early_stopping, on an overfitting and a good run.

Rerun: cd testdata/gen && /usr/bin/python3 frameworks_sklearn.py
Ran with python3-sklearn 1.2.1+dfsg-1, python3-numpy 1.24.2 (Debian 12).
Each run is a child process whose stdout and stderr (merged, unbuffered) are
the captured file, exactly as a console would get them. The plain-CSV twin
comes from the fitted model's own loss_curve_ and validation_scores_, rounded
as sklearn prints them (loss %.8f, score %f), not from parsing the log.
"""
import sys

from digits import OUT, capture, save_twin, split, subset

RUNS = {
    # 200 of the 1,437 training examples, half of them held out by sklearn
    # itself (validation_fraction=0.5): 200 to fit, a wide net, no L2.
    "sklearn-mlp-earlystop-overfit": dict(
        n=400, hidden_layer_sizes=(512, 512), alpha=0.0, early_stopping=True,
        validation_fraction=0.5, n_iter_no_change=60, max_iter=300),
    "sklearn-mlp-earlystop-good": dict(
        n=1437, hidden_layer_sizes=(128,), alpha=1e-3, early_stopping=True),
    "sklearn-mlp-overfit": dict(
        n=150, hidden_layer_sizes=(512, 512), alpha=0.0, max_iter=300),
    "sklearn-mlp-good": dict(
        n=1437, hidden_layer_sizes=(64,), alpha=1e-3, max_iter=60),
}


def child(name):
    from sklearn.neural_network import MLPClassifier
    kw = dict(RUNS[name])
    n = kw.pop("n")
    Xtr, _, ytr, _ = split()
    if n < len(Xtr):
        Xtr, ytr = subset(Xtr, ytr, n, seed=1)
    clf = MLPClassifier(verbose=True, random_state=1, **kw).fit(Xtr, ytr)
    scores = getattr(clf, "validation_scores_", None) or []
    rows = [dict(epoch=i + 1, train_loss=float(f"{l:.8f}"),
                 val_acc=float(f"{scores[i]:f}") if scores else None)
            for i, l in enumerate(clf.loss_curve_)]
    save_twin(f"{OUT}/frameworks/{name}", rows)


def main():
    for name in RUNS:
        capture(__file__, [name], f"{OUT}/frameworks/{name}")


if __name__ == "__main__":
    child(sys.argv[1]) if len(sys.argv) > 1 else main()
