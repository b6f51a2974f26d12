#!/usr/bin/python3
"""Layouts written from memory, filled with real numbers printed while a
real PyTorch MLP trains on digits: a whitespace-aligned results table with
mm:ss times, `Epoch(train)`/`Epoch(val)` logger lines with
`accuracy/top1`, and a Keras-style CSV into which the checkpoint callback's
console lines were mixed. Same two runs as frameworks_torch.py.

Rerun: cd testdata/gen && /usr/bin/python3 frameworks_styles.py
Ran with python3-torch 1.13.1+dfsg-4, python3-numpy 1.24.2,
python3-sklearn 1.2.1+dfsg-1 (Debian 12).
"""
import time
from datetime import datetime, timedelta

import numpy as np

from digits import OUT, fit, layouts_main
from frameworks_torch import RUNS

FW = f"{OUT}/frameworks"


def mmss(seconds):
    return f"{int(seconds) // 60:02d}:{int(seconds) % 60:02d}"


def table(kind):
    """Header of names, one row per epoch (counted from 0), each cell padded
    to its header's width; train_loss is the debiased exponential moving
    average of the batch losses (beta 0.98) at the epoch's end."""
    names = ["epoch", "train_loss", "valid_loss", "accuracy", "time"]
    print("  ".join(names) + "  ")
    ema = dict(avg=0.0, n=0)
    rows = []

    def on_batch(epoch, i, nb, loss, lr):
        ema["n"] += 1
        ema["avg"] = 0.98 * ema["avg"] + 0.02 * loss

    def on_epoch(epoch, m):
        smooth = ema["avg"] / (1 - 0.98 ** ema["n"])
        cells = [str(epoch - 1), f"{smooth:.6f}", f"{m['val_loss']:.6f}",
                 f"{m['val_acc']:.6f}", mmss(m["seconds"])]
        print("  ".join(c.ljust(len(h)) for c, h in zip(cells, names)) + "  ")
        rows.append(dict(epoch=epoch - 1, train_loss=float(cells[1]),
                         val_loss=float(cells[2]), val_acc=float(cells[3])))
    fit(RUNS[kind], on_batch, on_epoch)
    return rows


def epochval(kind):
    """`<time> - mmengine - INFO - Epoch(train) [e][ i/n]  lr: …  eta: …
    time: …  loss: …` every `every` iterations (loss: the mean over them)
    and `Epoch(val) [e][12/12]    accuracy/top1: 83.0556  time: …` after
    each epoch. The clock starts at an invented date; times are real."""
    cfg = RUNS[kind]
    every = 5 if kind == "overfit" else 10
    clock = dict(t0=time.time(), last=time.time(), window=[], done=0)
    stamp0 = datetime(2031, 5, 4, 10, 0, 0)
    rows = []

    def stamp():
        return (stamp0 + timedelta(seconds=time.time() - clock["t0"])
                ).strftime("%Y/%m/%d %H:%M:%S")

    def on_batch(epoch, i, nb, loss, lr):
        clock["window"].append(loss)
        clock["done"] += 1
        if (i + 1) % every:
            return
        now = time.time()
        per_it = (now - clock["last"]) / len(clock["window"])
        left = (cfg["epochs"] * nb - clock["done"]) * per_it
        loss = np.mean(clock["window"])
        print(f"{stamp()} - mmengine - INFO - Epoch(train) "
              f"[{epoch}][{i + 1:>{len(str(nb))}}/{nb}]  lr: {lr:.4e}  "
              f"eta: {timedelta(seconds=int(left))}  time: {per_it:.4f}  "
              f"loss: {loss:.4f}")
        train.setdefault(epoch, []).append(round(float(loss), 4))
        clock["last"], clock["window"] = now, []

    def on_epoch(epoch, m):
        top1 = round(100 * m["val_acc"], 4)
        print(f"{stamp()} - mmengine - INFO - Epoch(val) [{epoch}][12/12]    "
              f"accuracy/top1: {top1:.4f}  time: {m['val_seconds'] / 12:.4f}")
        clock["last"] = time.time()
        losses = train.get(epoch, [])
        rows.append(dict(epoch=epoch, val_acc=round(top1 / 100, 6),
                         train_loss=round(float(np.mean(losses)), 8)
                         if losses else None))
    train = {}
    fit(cfg, on_batch, on_epoch)
    return rows


def keras_csv(kind):
    """CSVLogger-style rows (epoch from 0, keys sorted, float32 values in
    full) with the checkpoint callback's lines, each after a blank line,
    mixed in: `Epoch 00021: val_loss improved from 0.41234 to 0.39123,
    saving model to best.h5` or `Epoch 00022: val_loss did not improve
    from 0.39123`."""
    print("epoch,accuracy,loss,lr,val_accuracy,val_loss")
    best = dict(v=float("inf"))
    rows = []

    def on_epoch(epoch, m):
        f32 = {k: float(np.float32(m[k])) for k in
               ("train_acc", "train_loss", "lr", "val_acc", "val_loss")}
        print(f"{epoch - 1},{f32['train_acc']},{f32['train_loss']},"
              f"{f32['lr']},{f32['val_acc']},{f32['val_loss']}")
        v = f32["val_loss"]
        if v < best["v"]:
            print(f"\nEpoch {epoch:05d}: val_loss improved from "
                  f"{best['v']:.5f} to {v:.5f}, saving model to best.h5")
            best["v"] = v
        else:
            print(f"\nEpoch {epoch:05d}: val_loss did not improve from "
                  f"{best['v']:.5f}")
        rows.append(dict(epoch=epoch - 1, train_loss=f32["train_loss"],
                         val_loss=v, train_acc=f32["train_acc"],
                         val_acc=f32["val_acc"]))
    fit(RUNS[kind], on_epoch=on_epoch)
    return rows


LAYOUTS = {  # layout -> (function, file name prefix, extension)
    "table": (table, "aligned-table", ".txt"),
    "epochval": (epochval, "epochval", ".log"),
    "keras": (keras_csv, "keras-style", ".csv"),
}


if __name__ == "__main__":
    layouts_main(__file__, LAYOUTS, RUNS, FW)
