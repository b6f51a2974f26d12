#!/usr/bin/python3
"""An evaluation set of real PyTorch MLP runs on digits for the judge:
runs that collapse without NaN, label noise with fast and slow optimizers,
small training sets, slow learners, lr schedules and healthy runs. Writes
../runs/<name>.csv (epoch,train_loss,val_loss,train_acc,val_acc,lr) and the
table of ../runs/README.md from the numbers.

Rerun: cd testdata/gen && /usr/bin/python3 runs.py [name ...]
(`runs.py --table` only rewrites the README table from the files.)
Ran with python3-torch 1.13.1+dfsg-4, python3-sklearn 1.2.1+dfsg-1,
python3-numpy 1.24.2 (Debian 12), one thread; a run takes seconds to a
minute. Training metrics are running means over the epoch's batches, on the
labels as trained (flipped ones included); lr is the rate at the epoch's
first step.
"""
import sys

from digits import OUT
from evalset import cosine, generate, grow, steps, warmup

SGD = dict(opt="sgd", momentum=0.9, batch=64)
ADAM = dict(opt="adam", batch=64)
NOISY_SGD = dict(SGD, hidden=(256, 256), lr=0.01, epochs=200)
NOISY_ADAM = dict(ADAM, hidden=(256, 256), lr=1e-3, epochs=100)

RUNS = [  # (name, what the run did, config)
    ("mlp-lrrange-sgd", "range test left running: SGD momentum 0.9, "
     "hidden (128, 128), lr 1e-3 growing ×1.2 per epoch (per step)",
     dict(SGD, hidden=(128, 128), lr=1e-3, epochs=60,
          schedule=grow(1e-3, 1.2))),
    ("mlp-lrrange-sgd-x1.1", "range test left running, slower: SGD "
     "momentum 0.9, hidden (128, 128), lr 1e-3 ×1.1 per epoch",
     dict(SGD, hidden=(128, 128), lr=1e-3, epochs=110,
          schedule=grow(1e-3, 1.1))),
    ("mlp-lrrange-adam", "range test left running: Adam, hidden (128, 128), "
     "lr 1e-5 ×1.2 per epoch",
     dict(ADAM, hidden=(128, 128), lr=1e-5, epochs=60,
          schedule=grow(1e-5, 1.2))),
    ("mlp-warmup-too-high-sgd", "linear warm-up over 20 epochs to a "
     "too-high peak lr 1.0, then held: SGD momentum 0.9, hidden (128, 128)",
     dict(SGD, hidden=(128, 128), lr=1.0, epochs=40,
          schedule=warmup(1.0, 20))),
    ("mlp-warmup-too-high-adam", "linear warm-up over 10 epochs to a "
     "too-high peak lr 0.5, then held: Adam, hidden (128, 128)",
     dict(ADAM, hidden=(128, 128), lr=0.5, epochs=40,
          schedule=warmup(0.5, 10))),
    ("mlp-warmup-cosine-ok", "healthy contrast: 5 warm-up epochs to lr 0.1, "
     "cosine to 0 at 60: SGD momentum 0.9, hidden (128, 128)",
     dict(SGD, hidden=(128, 128), lr=0.1, epochs=60,
          schedule=cosine(0.1, 60, 5))),
] + [
    (f"mlp-labelnoise{p}-{o}", f"{p} % of the training labels flipped to "
     "another class; " + ("fast: Adam lr 1e-3, 100 epochs" if o == "adam"
                          else "slow: SGD lr 0.01 momentum 0.9, 200 epochs")
     + ", hidden (256, 256), no regularization",
     dict(NOISY_ADAM if o == "adam" else NOISY_SGD, noise=p / 100))
    for p in (20, 35, 50) for o in ("adam", "sgd")
] + [
    (f"mlp-subset{n}", f"{n} training images, Adam lr 1e-3, hidden "
     "(256, 256), batch 16, no regularization, 150 epochs",
     dict(ADAM, n=n, hidden=(256, 256), lr=1e-3, batch=16, epochs=150))
    for n in (50, 100, 200)
] + [
    ("mlp-slow-sgd", "slow learner: plain SGD lr 0.002, no momentum, hidden "
     "(128,), 100 epochs", dict(SGD, momentum=0.0, hidden=(128,), lr=0.002,
                                epochs=100)),
    ("mlp-slow-tiny-adam", "slow learner: hidden (16,), Adam lr 1e-4, 80 "
     "epochs", dict(ADAM, hidden=(16,), lr=1e-4, epochs=80)),
    ("mlp-step-sgd", "step schedule: SGD momentum 0.9 lr 0.3, weight decay "
     "1e-3, ×0.1 after epochs 20 and 40, hidden (128, 128), 60 epochs",
     dict(SGD, hidden=(128, 128), lr=0.3, wd=1e-3, epochs=60,
          schedule=steps(0.3, (20, 40)))),
    ("mlp-cosine-sgd", "cosine schedule: SGD momentum 0.9 lr 0.05 to 0 at "
     "80, hidden (128, 128)",
     dict(SGD, hidden=(128, 128), lr=0.05, epochs=80,
          schedule=cosine(0.05, 80))),
    ("mlp-cosine-adam", "cosine schedule: Adam lr 3e-3 to 0 at 60, hidden "
     "(256,), weight decay 1e-4",
     dict(ADAM, hidden=(256,), lr=3e-3, wd=1e-4, epochs=60,
          schedule=cosine(3e-3, 60))),
] + [
    (f"mlp-healthy-adam-seed{s}", "healthy: Adam lr 1e-3, hidden (128,), "
     "weight decay 1e-4, 40 epochs",
     dict(ADAM, hidden=(128,), lr=1e-3, wd=1e-4, epochs=40, seed=s))
    for s in (1, 2, 3)
] + [
    ("mlp-healthy-dropout", "healthy: Adam lr 1e-3, hidden (256, 256), "
     "dropout 0.2, 50 epochs", dict(ADAM, hidden=(256, 256), dropout=0.2,
                                    lr=1e-3, epochs=50)),
    ("mlp-healthy-sgd", "healthy: SGD momentum 0.9 lr 0.05, hidden (128,), "
     "weight decay 5e-4, 40 epochs", dict(SGD, hidden=(128,), lr=0.05,
                                          wd=5e-4, epochs=40)),
]


if __name__ == "__main__":
    generate(RUNS, f"{OUT}/runs", set(sys.argv[1:]))
