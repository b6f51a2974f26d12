#!/usr/bin/python3
"""Capture xgboost's own round lines, from the native xgb.train(evals=...)
and from the sklearn-API XGBClassifier.fit(eval_set=...), each printed every
round and thinned (every 10th round), on an overfitting and a good run.
The native runs' numbers are also written in another boosting library's
round-line layout, `[1]\ttraining's multi_logloss: 1.39068\tvalid_1's …`
(rounds from 1, values %g), from memory: that library is not in Debian 12.

Rerun: cd testdata/gen && /usr/bin/python3 frameworks_xgboost.py
Ran with python3-xgboost 1.7.4-1, python3-sklearn 1.2.1+dfsg-1 (Debian 12).
Each run is a child process whose merged stdout and stderr are the captured
file. The plain-CSV twin comes from the booster's evals_result(), rounded to
the 5 decimals xgboost prints; accuracy = 1 - merror; epoch = the round
number as printed (counting from 0); thinned files keep only printed rounds.
"""
import sys

from digits import OUT, capture, save_twin, split, subset, write_plain

ROUNDS = {"overfit": 150, "good": 200}
PARAMS = {
    # 180 of the 1,437 training examples, deep trees, no regularization.
    "overfit": dict(eta=0.3, max_depth=6, min_child_weight=0, reg_lambda=0),
    "good": dict(eta=0.1, max_depth=3, subsample=0.8, colsample_bytree=0.6),
}
SIZE = {"overfit": 180, "good": 1437}
EVERY = 10  # the thinned files print every 10th round


def runs():
    for api in ("train", "sklearn"):
        for kind in ("overfit", "good"):
            for every in (1, EVERY):
                yield api, kind, every


def name(api, kind, every):
    thin = f"-every{every}" if every > 1 else ""
    return f"xgboost-{api}-{kind}{thin}"


def child(api, kind, every):
    import xgboost as xgb
    Xtr, Xva, ytr, yva = split()
    if SIZE[kind] < len(Xtr):
        Xtr, ytr = subset(Xtr, ytr, SIZE[kind], seed=1)
    metrics = ["mlogloss", "merror"]
    if api == "train":
        dtrain = xgb.DMatrix(Xtr, label=ytr)
        dvalid = xgb.DMatrix(Xva, label=yva)
        params = dict(objective="multi:softprob", num_class=10, nthread=1,
                      seed=1, eval_metric=metrics, **PARAMS[kind])
        res = {}
        xgb.train(params, dtrain, ROUNDS[kind], evals_result=res,
                  evals=[(dtrain, "train"), (dvalid, "eval")],
                  verbose_eval=True if every == 1 else every)
        tr, va = res["train"], res["eval"]
    else:
        clf = xgb.XGBClassifier(n_estimators=ROUNDS[kind], n_jobs=1,
                                random_state=1, eval_metric=metrics,
                                **PARAMS[kind])
        clf.fit(Xtr, ytr, eval_set=[(Xtr, ytr), (Xva, yva)],
                verbose=True if every == 1 else every)
        res = clf.evals_result()
        tr, va = res["validation_0"], res["validation_1"]
    n = len(tr["mlogloss"])
    # Rounds the callback prints: every k-th from 0, and always the last.
    shown = [i for i in range(n) if i % every == 0 or i == n - 1]
    r5 = lambda v: round(v, 5)
    rows = [dict(epoch=i, train_loss=r5(tr["mlogloss"][i]),
                 val_loss=r5(va["mlogloss"][i]),
                 train_acc=r5(1 - r5(tr["merror"][i])),
                 val_acc=r5(1 - r5(va["merror"][i]))) for i in shown]
    save_twin(f"{OUT}/frameworks/{name(api, kind, every)}", rows)
    if api == "train" and every == 1:
        other_library(kind, tr, va)


def other_library(kind, tr, va):
    """The same rounds as `[N]\tname's metric: value` pairs (from memory)."""
    base = f"{OUT}/frameworks/lightgbm-style-{kind}"
    g = lambda v: float(f"{v:g}")
    rows = []
    with open(base + ".log", "w") as f:
        for i in range(len(tr["mlogloss"])):
            pairs = [("training", tr), ("valid_1", va)]
            f.write(f"[{i + 1}]\t" + "\t".join(
                f"{who}'s multi_{m}: {g(res['m' + m][i]):g}"
                for who, res in pairs for m in ("logloss", "error")) + "\n")
            rows.append(dict(epoch=i + 1, train_loss=g(tr["mlogloss"][i]),
                             val_loss=g(va["mlogloss"][i]),
                             train_acc=round(1 - g(tr["merror"][i]), 10),
                             val_acc=round(1 - g(va["merror"][i]), 10)))
    write_plain(base + ".plain.csv", rows)


def main():
    for api, kind, every in runs():
        capture(__file__, [api, kind, every],
                f"{OUT}/frameworks/{name(api, kind, every)}")


if __name__ == "__main__":
    if len(sys.argv) > 1:
        child(sys.argv[1], sys.argv[2], int(sys.argv[3]))
    else:
        main()
