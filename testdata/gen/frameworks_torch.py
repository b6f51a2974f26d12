#!/usr/bin/python3
"""Real PyTorch trainings on digits, printed by our own loops in layouts
people use: the classic example's console lines, a tqdm bar over the epochs
(raw bytes to a file, and through a pseudo-terminal), Python dict lines with
the JSON state document they come with, dicts of numpy scalars, a TSV
with '#' comment lines, and `epoch 3 train_loss=… val_loss=… val_acc=…`
lines. One overfitting and one good run each.

Rerun: cd testdata/gen && /usr/bin/python3 frameworks_torch.py
Ran with python3-torch 1.13.1+dfsg-4, python3-tqdm 4.64.1-1,
python3-numpy 1.24.2, python3-sklearn 1.2.1+dfsg-1 (Debian 12).
Every layout prints while training; the parent keeps the bytes (capture in
digits.py) and the plain-CSV twin the loop saved with the numbers it printed.
"""
import json
import shutil
from collections import defaultdict
from statistics import mean

import numpy as np

from digits import OUT, capture, finish_twin, fit, layouts_main, save_twin

RUNS = {
    # 150 of the 1,437 training images, two wide layers, no weight decay.
    "overfit": dict(n=150, hidden=(512, 512), lr=1e-3, epochs=80, batch=16),
    "good": dict(hidden=(128,), lr=1e-3, wd=1e-4, epochs=30, batch=64),
}
FW = f"{OUT}/frameworks"


def classic(kind):
    """`Train Epoch: 1 [0/1437 (0%)]\\tLoss: 2.302585` every few batches and
    a `Test set:` block after each epoch; the twin's train_loss is the mean
    of the batch losses printed in the epoch."""
    cfg, every = RUNS[kind], 3 if kind == "overfit" else 5
    printed = defaultdict(list)
    n = cfg.get("n", 1437)

    def on_batch(epoch, i, nb, loss, lr):
        if i % every == 0:
            print("Train Epoch: {} [{}/{} ({:.0f}%)]\tLoss: {:.6f}".format(
                epoch, i * cfg["batch"], n, 100.0 * i / nb, loss))
            printed[epoch].append(round(loss, 6))

    def on_epoch(epoch, m):
        right = round(m["val_acc"] * m["n_val"])
        print("\nTest set: Average loss: {:.4f}, Accuracy: {}/{} ({:.0f}%)\n"
              .format(m["val_loss"], right, m["n_val"],
                      100.0 * right / m["n_val"]))
        rows.append(dict(epoch=epoch, val_loss=round(m["val_loss"], 4),
                         train_loss=round(mean(printed[epoch]), 8),
                         val_acc=right / m["n_val"]))
    rows = []
    fit(cfg, on_batch, on_epoch)
    return rows


def bar(kind):
    """One tqdm bar over the epochs, its postfix set after each epoch, so
    every epoch redraws the same physical line with \\r."""
    from tqdm import tqdm
    cfg, rows = RUNS[kind], []
    pbar = tqdm(total=cfg["epochs"], unit="epoch")

    def on_epoch(epoch, m):
        vals = {k: m[k] for k in ("train_loss", "train_acc", "val_loss",
                                  "val_acc")}
        shown = {k: tqdm.format_num(v) for k, v in vals.items()}
        pbar.set_postfix(loss=vals["train_loss"], acc=vals["train_acc"],
                         val_loss=vals["val_loss"], val_acc=vals["val_acc"])
        pbar.update(1)
        rows.append(dict(epoch=epoch,
                         **{k: float(v) for k, v in shown.items()}))
    fit(cfg, on_epoch=on_epoch)
    pbar.close()
    return rows


def dictlines(kind):
    """A trainer-style loop: `{'loss': …, 'learning_rate': …, 'epoch': 0.5}`
    every few steps, `{'eval_loss': …, 'eval_accuracy': …, 'epoch': 1.0}`
    after each epoch, a closing summary dict; and the state document with
    its log_history list, rewritten by json.dump at each epoch's checkpoint.
    The rate decays linearly to 0. The twin's train_loss is the mean of the
    'loss' records whose epoch lies in (e-1, e]."""
    cfg = dict(RUNS[kind])
    total, lr0 = cfg["epochs"], cfg["lr"]
    cfg["schedule"] = lambda t: lr0 * (1 - t / total)
    every = 5 if kind == "overfit" else 10
    state = dict(step=0, window=[], all=[], history=[], best=None)
    per_epoch = defaultdict(list)
    rows = []

    def log(record):
        print(record)
        state["history"].append(dict(record, step=state["step"]))

    def on_batch(epoch, i, nb, loss, lr):
        state["step"] += 1
        state["window"].append(loss)
        state["all"].append(loss)
        if state["step"] % every == 0:
            ep = round(state["step"] / nb, 2)
            mean = round(sum(state["window"]) / len(state["window"]), 4)
            log({"loss": mean, "learning_rate": lr, "epoch": ep})
            per_epoch[epoch].append(mean)  # ep lies in (epoch-1, epoch]
            state["window"] = []

    def on_epoch(epoch, m):
        secs = m["val_seconds"]
        log({"eval_loss": m["val_loss"], "eval_accuracy": m["val_acc"],
             "eval_runtime": round(secs, 4),
             "eval_samples_per_second": round(m["n_val"] / secs, 3),
             "eval_steps_per_second": round(1 / secs, 3),
             "epoch": float(epoch)})
        if state["best"] is None or m["val_loss"] < state["best"][0]:
            state["best"] = (m["val_loss"], state["step"])
        dump(kind, epoch, state, m["batches"])
        losses = per_epoch[epoch]
        rows.append(dict(epoch=epoch, val_loss=m["val_loss"],
                         val_acc=m["val_acc"], train_loss=round(
                             mean(losses), 8) if losses else None))

    import time
    start = time.time()
    fit(cfg, on_batch, on_epoch)
    secs = time.time() - start
    n = cfg.get("n", 1437)
    log({"train_runtime": round(secs, 4),
         "train_samples_per_second": round(n * total / secs, 3),
         "train_steps_per_second": round(state["step"] / secs, 3),
         "train_loss": sum(state["all"]) / len(state["all"]),
         "epoch": float(total)})
    dump(kind, total, state, None)
    return rows


def dump(kind, epoch, state, batches):
    """The state document a checkpoint writes (keys as we remember them)."""
    doc = {"best_metric": state["best"][0],
           "best_model_checkpoint": f"out/checkpoint-{state['best'][1]}",
           "epoch": float(epoch), "global_step": state["step"],
           "log_history": state["history"],
           "max_steps": RUNS[kind]["epochs"] * (batches or 0) or state["step"],
           "num_train_epochs": RUNS[kind]["epochs"]}
    path = f"{FW}/loghistory-{kind}.json"
    with open(path, "w") as f:
        json.dump(doc, f, indent=2)
    if epoch == 3 and batches:
        shutil.copyfile(path, f"{FW}/loghistory-{kind}-epoch3.json")


def numpy_dicts(kind):
    """print() of a dict of numpy scalars after each epoch. numpy 1.24
    prints them as plain numbers; numpy2-dict-*.log is the same run in
    numpy 2's repr, `np.float64(0.41)`, written from memory."""
    rows, newer = [], []

    def on_epoch(epoch, m):
        d = {"epoch": epoch, "loss": np.float64(m["train_loss"]),
             "acc": np.float64(m["train_acc"]),
             "val_loss": np.float32(m["val_loss"]),
             "val_acc": np.float64(m["val_acc"])}
        print(d)
        newer.append("{" + ", ".join(
            f"'{k}': " + (str(v) if isinstance(v, int) else
                          f"np.{type(v).__name__}({v!s})")
            for k, v in d.items()) + "}\n")
        rows.append(dict(epoch=epoch, train_loss=float(str(d["loss"])),
                         train_acc=float(str(d["acc"])),
                         val_loss=float(str(d["val_loss"])),
                         val_acc=float(str(d["val_acc"]))))
    fit(RUNS[kind], on_epoch=on_epoch)
    with open(f"{FW}/numpy2-dict-{kind}.log", "w") as f:
        f.writelines(newer)
    save_twin(f"{FW}/numpy2-dict-{kind}", rows)
    return rows


def tsv(kind):
    """A TSV with '#' comment lines: a header block, then one comment every
    10 epochs."""
    cfg = RUNS[kind]
    print(f"# digits MLP, hidden {'x'.join(map(str, cfg['hidden']))}, "
          f"{cfg.get('n', 1437)} training images, Adam lr={cfg['lr']}, "
          f"weight decay {cfg.get('wd', 0)}, seed 1")
    print("# loss and acc: running means over the epoch's batches")
    print("epoch\tloss\tacc\tval_loss\tval_acc\tlr\tseconds")
    rows = []

    def on_epoch(epoch, m):
        vals = [round(m[k], 6) for k in ("train_loss", "train_acc",
                                         "val_loss", "val_acc")]
        print(f"{epoch}\t" + "\t".join(f"{v:.6f}" for v in vals) +
              f"\t{m['lr']:g}\t{m['seconds']:.2f}")
        if epoch % 10 == 0:
            print(f"# epoch {epoch}: checkpoint written")
        rows.append(dict(zip(["epoch", "train_loss", "train_acc", "val_loss",
                              "val_acc"], [epoch] + vals)))
    fit(cfg, on_epoch=on_epoch)
    return rows


def keyvalue(kind):
    """The most common hand-written line, `epoch 3 train_loss=0.4100
    val_loss=0.5200 val_acc=0.8300`: loss on both splits, accuracy on
    validation only."""
    rows = []

    def on_epoch(epoch, m):
        vals = {k: round(m[k], 4) for k in ("train_loss", "val_loss",
                                            "val_acc")}
        print(f"epoch {epoch} " + " ".join(f"{k}={v:.4f}"
                                           for k, v in vals.items()))
        rows.append(dict(epoch=epoch, **vals))
    fit(RUNS[kind], on_epoch=on_epoch)
    return rows


LAYOUTS = {  # layout -> (function, file name prefix, extension)
    "classic": (classic, "torch-classic", ".log"),
    "bar": (bar, "tqdm-epochs", ".log"),
    "dict": (dictlines, "dictlines", ".log"),
    "numpy": (numpy_dicts, "numpy-dict", ".log"),
    "tsv": (tsv, "comments", ".tsv"),
    "keyvalue": (keyvalue, "keyvalue", ".log"),
}


def pty_and_copies():
    """The bar again on a pseudo-terminal; the numpy 2 twins; the state
    document's twin (the dict lines' run)."""
    for kind in RUNS:
        finish_twin(f"{FW}/numpy2-dict-{kind}")
        capture(__file__, ["bar", kind, "tqdm-epochs-pty"],
                f"{FW}/tqdm-epochs-pty-{kind}", ".log", pty_cols=100)
        shutil.copyfile(f"{FW}/dictlines-{kind}.plain.csv",
                        f"{FW}/loghistory-{kind}.plain.csv")


if __name__ == "__main__":
    layouts_main(__file__, LAYOUTS, RUNS, FW, after=pty_and_copies)
