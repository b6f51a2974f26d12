"""Shared pieces of the fixture generators: the digits split, the MLP and its
epoch loop, and the plain CSV writer. Not run on its own.

Rerun any generator with Debian's packages (bookworm), from this directory:
    /usr/bin/python3 <script>.py
Ran with python3 3.11.2, python3-torch 1.13.1+dfsg-4, python3-sklearn
1.2.1+dfsg-1, python3-numpy 1.24.2, python3-xgboost 1.7.4-1,
python3-tqdm 4.64.1-1. Outputs land in ../frameworks, ../runs, ../curves.
"""
import csv
import os

import numpy as np
from sklearn.datasets import load_digits
from sklearn.model_selection import train_test_split

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.normpath(os.path.join(HERE, ".."))


def split(seed=0):
    """The digits data (1,797 8x8 images, 10 classes) as a stratified
    1,437/360 train/validation split, pixels scaled to [0, 1]."""
    X, y = load_digits(return_X_y=True)
    X = (X / 16.0).astype(np.float32)
    return train_test_split(X, y, test_size=0.2, random_state=seed, stratify=y)


def subset(X, y, n, seed):
    """The first n examples of a seeded permutation of (X, y)."""
    idx = np.random.RandomState(seed).permutation(len(X))[:n]
    return X[idx], y[idx]


def flip_labels(y, rate, seed, classes=10):
    """A copy of y with a fraction `rate` of the labels replaced by a
    different class drawn uniformly (symmetric label noise)."""
    rng = np.random.RandomState(seed)
    y = y.copy()
    pick = rng.rand(len(y)) < rate
    y[pick] = (y[pick] + rng.randint(1, classes, pick.sum())) % classes
    return y


def torch_setup(seed):
    import torch
    torch.set_num_threads(1)
    torch.manual_seed(seed)
    return torch


def mlp(torch, hidden, dropout=0.0):
    layers, width = [], 64
    for h in hidden:
        layers += [torch.nn.Linear(width, h), torch.nn.ReLU()]
        if dropout:
            layers.append(torch.nn.Dropout(dropout))
        width = h
    layers.append(torch.nn.Linear(width, 10))
    return torch.nn.Sequential(*layers)


def evaluate(torch, model, X, y):
    """Mean cross-entropy and accuracy of model on (X, y), in eval mode."""
    model.eval()
    with torch.no_grad():
        out = model(torch.from_numpy(X))
        t = torch.from_numpy(y).long()
        loss = torch.nn.functional.cross_entropy(out, t).item()
        acc = (out.argmax(1) == t).float().mean().item()
    model.train()
    return loss, acc


def train_epoch(torch, model, opt, X, y, batch, gen, on_batch=None, clip=None):
    """One pass over (X, y) in shuffled mini-batches. Returns the mean of the
    batch losses and the accuracy on the batches as trained (the running
    training metrics a loop would log). on_batch(i, n_batches, loss) is
    called after each step; it may change the learning rate."""
    model.train()
    perm = torch.randperm(len(X), generator=gen)
    Xt, yt = torch.from_numpy(X), torch.from_numpy(y).long()
    losses, correct, nb = [], 0, (len(X) + batch - 1) // batch
    for i in range(nb):
        idx = perm[i * batch:(i + 1) * batch]
        out = model(Xt[idx])
        loss = torch.nn.functional.cross_entropy(out, yt[idx])
        opt.zero_grad()
        loss.backward()
        if clip:
            torch.nn.utils.clip_grad_norm_(model.parameters(), clip)
        opt.step()
        losses.append(loss.item() * len(idx))
        correct += (out.argmax(1) == yt[idx]).sum().item()
        if on_batch:
            on_batch(i, nb, loss.item())
    return sum(losses) / len(X), correct / len(X)


def fit(cfg, on_batch=None, on_epoch=None):
    """Train an MLP on the digits split as cfg says, one thread, seeded.

    cfg keys: n (training images, default all 1,437), hidden (widths),
    opt ('adam' or 'sgd'), lr, momentum, wd (weight decay), dropout, epochs,
    batch, noise (fraction of flipped training labels), clip (gradient norm),
    seed, and schedule(t) -> learning rate at t = fractional epochs done.
    on_batch(epoch, i, n_batches, loss, lr) runs after every step;
    on_epoch(epoch, m) after every epoch, m holding train_loss, train_acc
    (running, on the labels as trained), val_loss, val_acc, lr, seconds.
    Returns the list of the m dicts, with their epoch."""
    import time
    seed = cfg.get("seed", 1)
    torch = torch_setup(seed)
    Xtr, Xva, ytr, yva = split()
    n = cfg.get("n", len(Xtr))
    if n < len(Xtr):
        Xtr, ytr = subset(Xtr, ytr, n, seed)
    if cfg.get("noise"):
        ytr = flip_labels(ytr, cfg["noise"], seed)
    model = mlp(torch, cfg["hidden"], cfg.get("dropout", 0.0))
    if cfg.get("opt", "adam") == "adam":
        opt = torch.optim.Adam(model.parameters(), lr=cfg["lr"],
                               weight_decay=cfg.get("wd", 0.0))
    else:
        opt = torch.optim.SGD(model.parameters(), lr=cfg["lr"],
                              momentum=cfg.get("momentum", 0.0),
                              weight_decay=cfg.get("wd", 0.0))
    schedule = cfg.get("schedule") or (lambda t: cfg["lr"])
    gen = torch.Generator().manual_seed(seed)
    history = []
    for epoch in range(1, cfg["epochs"] + 1):
        start = time.time()

        def step(i, nb, loss, epoch=epoch):
            lr = opt.param_groups[0]["lr"]
            if on_batch:
                on_batch(epoch, i, nb, loss, lr)
            for g in opt.param_groups:  # the rate of the next step
                g["lr"] = schedule(epoch - 1 + (i + 1) / nb)

        for g in opt.param_groups:
            g["lr"] = schedule(epoch - 1)
        lr = opt.param_groups[0]["lr"]
        tl, ta = train_epoch(torch, model, opt, Xtr, ytr, cfg["batch"], gen,
                             on_batch=step, clip=cfg.get("clip"))
        val_start = time.time()
        vl, va = evaluate(torch, model, Xva, yva)
        end = time.time()
        m = dict(epoch=epoch, train_loss=tl, train_acc=ta, val_loss=vl,
                 val_acc=va, lr=lr, seconds=end - start,
                 val_seconds=end - val_start, n_train=len(Xtr),
                 n_val=len(Xva), batches=(len(Xtr) + cfg["batch"] - 1)
                 // cfg["batch"])
        history.append(m)
        if on_epoch:
            on_epoch(epoch, m)
    return history


PLAIN = ["epoch", "train_loss", "val_loss", "train_acc", "val_acc"]


def write_csv(path, header, rows, digits=6):
    """Write rows (dicts) as a CSV with the given columns; floats rounded to
    `digits` significant digits (None: exactly), missing values empty."""
    def cell(v):
        if v is None:
            return ""
        if isinstance(v, float):
            return repr(v) if digits is None else f"{v:.{digits}g}"
        return str(v)
    os.makedirs(os.path.dirname(path), exist_ok=True)
    with open(path, "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(header)
        for r in rows:
            w.writerow([cell(r.get(h)) for h in header])


def write_plain(path, rows):
    """The plain-CSV twin of a captured run: only the columns of PLAIN that
    the captured layout carries, in PLAIN's order, with its numbers exactly
    (Python's shortest repr of each float)."""
    header = [h for h in PLAIN if any(r.get(h) is not None for r in rows)]
    write_csv(path, header, rows, digits=None)


def save_twin(base, rows):
    """In a capturing child: hand the run's numbers to the parent (base is
    the output path without its extension)."""
    import json
    with open(base + ".twin.json", "w") as f:
        json.dump(rows, f)


def capture(script, args, base, ext=".log", pty_cols=None):
    """Run `script args` as a child process and keep its merged, unbuffered
    stdout and stderr as base+ext, byte for byte; then write the plain-CSV
    twin the child saved with save_twin. With pty_cols the child runs on a
    pseudo-terminal of that width through util-linux `script`, so programs
    that look for a terminal draw as they would on one."""
    import json
    import shlex
    import subprocess
    import sys
    cmd = [sys.executable, "-u", script] + [str(a) for a in args]
    if pty_cols:
        inner = f"stty cols {pty_cols} rows 30; exec {shlex.join(cmd)}"
        cmd = ["script", "-q", "-e", "-c", inner, "/dev/null"]
    with open(base + ext, "wb") as f:
        subprocess.run(cmd, stdout=f, stderr=subprocess.STDOUT, check=True,
                       stdin=subprocess.DEVNULL)
    finish_twin(base)


def finish_twin(base):
    """Turn the numbers a child saved with save_twin into base.plain.csv."""
    import json
    with open(base + ".twin.json") as f:
        write_plain(base + ".plain.csv", json.load(f))
    os.remove(base + ".twin.json")


def layouts_main(script, layouts, kinds, outdir, after=None):
    """The command line of a layout generator. layouts maps a layout to
    (function(kind) -> twin rows, file name prefix, extension). With no
    arguments: capture every layout of every run kind as
    outdir/<prefix>-<kind><ext> with its twin, then call after(). As the
    child `script layout kind prefix`: train, print, save the twin."""
    import sys
    if len(sys.argv) > 1:
        layout, kind, prefix = sys.argv[1:4]
        save_twin(f"{outdir}/{prefix}-{kind}", layouts[layout][0](kind))
        return
    for layout, (_, prefix, ext) in layouts.items():
        for kind in kinds:
            capture(script, [layout, kind, prefix],
                    f"{outdir}/{prefix}-{kind}", ext)
    if after:
        after()
