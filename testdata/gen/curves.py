#!/usr/bin/python3
"""Full-length real learning curves for forecast evaluation: PyTorch MLPs on
digits with varied widths, rates, optimizers, schedules (steps included),
training-set sizes and seeds, 60-300 epochs each; and a data-size series,
one network trained to convergence on 6 subset sizes with 3 seeds.

Rerun: cd testdata/gen && /usr/bin/python3 curves.py [name ...]
(`curves.py --table` only rewrites the README tables from the files.)
Ran with python3-torch 1.13.1+dfsg-4, python3-sklearn 1.2.1+dfsg-1,
python3-numpy 1.24.2 (Debian 12), one thread. Columns as in ../runs
(epoch,train_loss,val_loss,train_acc,val_acc,lr); datasize-* files add
train_size. datasize-summary.csv is written from those files.
"""
import math
import sys

from digits import OUT, write_csv
from evalset import cosine, generate, read, steps

OPT = {"sgd": dict(opt="sgd"), "sgdm": dict(opt="sgd", momentum=0.9),
       "adam": dict(opt="adam")}


def curve(opt, lr, hidden, epochs, seed, n=1437, batch=64, wd=0.0,
          dropout=0.0, noise=0.0, at=(), cos=False):
    """(name, description, config) of one curve, both named from the
    config so they cannot disagree."""
    cfg = dict(OPT[opt], lr=lr, hidden=hidden, epochs=epochs, seed=seed,
               n=n, batch=batch, wd=wd, dropout=dropout, noise=noise)
    h = "x".join(map(str, hidden))
    name = f"{opt}-lr{lr:g}-h{h}"
    what = [{"sgd": "SGD", "sgdm": "SGD momentum 0.9", "adam": "Adam"}[opt]
            + f" lr {lr:g}", f"hidden {hidden}", f"batch {batch}"]
    for key, val, tag, text in (
            ("n", n != 1437, f"-n{n}", f"{n} training images"),
            ("wd", wd, f"-wd{wd:g}", f"weight decay {wd:g}"),
            ("dropout", dropout, f"-drop{dropout:g}", f"dropout {dropout:g}"),
            ("noise", noise, f"-noise{100 * noise:g}",
             f"{100 * noise:g} % labels flipped"),
            ("batch", batch != 64, f"-b{batch}", None)):
        if val:
            name += tag
            if text:
                what.append(text)
    if at:
        cfg["schedule"] = steps(lr, at)
        name += "-step" + "-".join(map(str, at))
        what.append("lr ×0.1 after epoch " + " and ".join(map(str, at)))
    if cos:
        cfg["schedule"] = cosine(lr, epochs)
        name += f"-cos{epochs}"
        what.append(f"cosine to 0 at {epochs}")
    what.append(f"{epochs} epochs")
    return f"{name}-seed{seed}", ", ".join(what), cfg


CURVES = [
    curve("sgd", 0.005, (64,), 300, 1),
    curve("sgd", 0.01, (64,), 300, 2),
    curve("sgd", 0.01, (64,), 200, 3, batch=32),
    curve("sgd", 0.02, (128,), 200, 1),
    curve("sgd", 0.05, (128,), 150, 3),
    curve("sgd", 0.01, (256, 256), 200, 1),
    curve("sgd", 0.02, (32,), 250, 2),
    curve("sgd", 0.1, (128,), 120, 1),
    curve("sgdm", 0.001, (128,), 200, 1),
    curve("sgdm", 0.003, (64,), 150, 2),
    curve("sgdm", 0.01, (256, 256), 100, 3),
    curve("adam", 1e-4, (64,), 300, 1),
    curve("adam", 3e-5, (128,), 300, 2),
    curve("adam", 3e-4, (128,), 150, 1),
    curve("adam", 1e-3, (512, 512), 100, 1),
    curve("adam", 1e-4, (16,), 300, 3),
    curve("adam", 1e-3, (32,), 120, 2),
    curve("sgd", 0.02, (128,), 300, 1, n=300),
    curve("adam", 3e-4, (128,), 200, 2, n=700),
    curve("adam", 1e-4, (256,), 300, 3, n=500),
    curve("sgdm", 0.003, (128,), 250, 1, n=200),
    curve("sgdm", 0.3, (128, 128), 90, 1, wd=1e-3, at=(30, 60)),
    curve("sgdm", 0.2, (128, 128), 120, 2, wd=1e-3, at=(40, 80)),
    curve("sgd", 0.1, (64,), 200, 3, at=(100,)),
    curve("adam", 3e-3, (128,), 100, 1, wd=1e-4, at=(50,)),
    curve("sgdm", 0.05, (128,), 100, 2, cos=True),
    curve("adam", 1e-3, (64,), 150, 3, cos=True),
    curve("adam", 3e-4, (256, 256), 150, 1, dropout=0.3),
    curve("sgd", 0.02, (128,), 200, 2, wd=1e-3),
    curve("sgdm", 0.01, (256, 256), 200, 2, noise=0.2),
]

SIZES = (100, 200, 400, 700, 1000, 1437)
SEEDS = (1, 2, 3)


def size_run(n, seed):
    """Hidden (128,), Adam lr 1e-3, weight decay 1e-4, batch 32, for about
    4,000 steps (60 to 300 epochs): to convergence at every size."""
    epochs = min(300, max(60, math.ceil(4000 / math.ceil(n / 32))))
    cfg = dict(opt="adam", lr=1e-3, wd=1e-4, hidden=(128,), batch=32, n=n,
               seed=seed, epochs=epochs, size_series=True)
    what = (f"{n} training images (seeded subset), Adam lr 1e-3, hidden "
            f"(128,), weight decay 1e-4, batch 32, {epochs} epochs")
    return f"datasize-n{n:04d}-seed{seed}", what, cfg


SIZE_RUNS = [size_run(n, s) for n in SIZES for s in SEEDS]


def summary():
    """One row per data-size run: its best validation error and epoch."""
    rows = []
    for name, _, cfg in SIZE_RUNS:
        r = read(f"{OUT}/curves/{name}.csv")
        best = min(r, key=lambda x: (1 - x["val_acc"], x["epoch"]))
        rows.append(dict(train_size=cfg["n"], seed=cfg["seed"],
                         best_val_error=round(1 - best["val_acc"], 6),
                         best_epoch=best["epoch"],
                         final_val_error=round(1 - r[-1]["val_acc"], 6),
                         min_val_loss=min(x["val_loss"] for x in r),
                         epochs=len(r)))
    write_csv(f"{OUT}/curves/datasize-summary.csv", list(rows[0]), rows, 6)


if __name__ == "__main__":
    names = set(sys.argv[1:])
    generate(CURVES + SIZE_RUNS, f"{OUT}/curves", names,
             extra=lambda cfg: {"train_size": cfg["n"]}
             if cfg.get("size_series") else {})
    summary()
