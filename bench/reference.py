"""Straightforward numpy reference of stratanet's training algorithm.

Reads a workload written by `cargo run --release --example bench -- prepare`
(data, starting weights and the row order of every epoch, so both sides do
exactly the same work), trains it with plain mini-batch SGD written the
obvious way in numpy, and prints one JSON line with the timing, the final
loss and the peak resident memory of this process.

Usage:
    python bench/reference.py train DIR THREADS
    python bench/reference.py predict DIR THREADS
    python bench/reference.py peak THREADS     # single-thread GEMM GFLOP/s

The algorithm (the same as src/train/engine.rs and src/train/mod.rs):
    z_l = a_{l-1} W_l + b_l, a_l = f(z_l) for hidden layers, head on the last
    delta_L = dE/dz_L / m (mean loss over the batch of m rows)
    dW_l = a_{l-1}^T delta_l, db_l = column sums of delta_l
    delta_{l-1} = (delta_l W_l^T) * f'(a_{l-1})
    W <- W - lr dW, b <- b - lr db   (plain SGD, after all gradients)
"""

import json
import os
import resource
import sys
import time

import numpy as np
from threadpoolctl import threadpool_info, threadpool_limits


def peak_rss_kb():
    with open("/proc/self/status") as f:
        for line in f:
            if line.startswith("VmHWM:"):
                return int(line.split()[1])
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss


def load(d):
    with open(os.path.join(d, "manifest.json")) as f:
        m = json.load(f)
    dt = np.float32 if m["dtype"] == "f32" else np.float64
    n, sizes = m["rows"], m["sizes"]
    x = np.fromfile(os.path.join(d, "x.f64"), dtype="<f8").reshape(n, sizes[0]).astype(dt)
    y = np.fromfile(os.path.join(d, "y.f64"), dtype="<f8").reshape(n, sizes[-1]).astype(dt)
    flat = np.fromfile(os.path.join(d, "init.f64"), dtype="<f8")
    ws, bs, off = [], [], 0
    for i, o in zip(sizes[:-1], sizes[1:]):
        ws.append(flat[off:off + i * o].reshape(i, o).astype(dt).copy())
        off += i * o
        bs.append(flat[off:off + o].astype(dt).copy())
        off += o
    order = None
    p = os.path.join(d, "order.u32")
    if os.path.exists(p):
        order = np.fromfile(p, dtype="<u4").reshape(m["epochs"], n).astype(np.intp)
    return m, dt, x, y, ws, bs, order


def act(name, z):
    if name == "relu":
        return np.maximum(z, 0)
    if name == "sigmoid":
        return 1.0 / (1.0 + np.exp(-z))
    if name == "tanh":
        return np.tanh(z)
    raise ValueError(name)


def dact(name, a):
    if name == "relu":
        return (a > 0).astype(a.dtype)
    if name == "sigmoid":
        return a * (1 - a)
    if name == "tanh":
        return 1 - a * a
    raise ValueError(name)


def head_loss_delta(m, z, y, scale):
    """Outputs, summed loss and delta = scale * dE/dz for one batch."""
    head, loss = m["head"], m["loss"]
    if head == "softmax" and loss == "cross_entropy":
        zmax = z.max(axis=1, keepdims=True)
        e = np.exp(z - zmax)
        s = e.sum(axis=1, keepdims=True)
        p = e / s
        total = float((y.sum(axis=1, keepdims=True) * (zmax + np.log(s)) - (y * z).sum(axis=1, keepdims=True)).sum())
        return p, total, (p - y) * scale
    # The library names its squared-error loss "half_squared_error" (it is
    # half the squared error); older data folders say "squared_error".
    if head == "logistic" and loss in ("half_squared_error", "squared_error"):
        a = 1.0 / (1.0 + np.exp(-z))
        total = float(0.5 * ((a - y) ** 2).sum())
        return a, total, (a - y) * a * (1 - a) * scale
    raise ValueError((head, loss))


def forward(m, ws, bs, a):
    acts = [a]
    last = len(ws) - 1
    for l, (w, b) in enumerate(zip(ws, bs)):
        z = a @ w + b
        a = z if l == last else act(m["activation"], z)
        acts.append(a)
    return acts


def train(m, dt, x, y, ws, bs, order):
    n, batch, lr = m["rows"], m["batch"], dt(m["learning_rate"])
    name = m["activation"]
    epoch_loss = 0.0
    for e in range(m["epochs"]):
        idx_all = order[e]
        epoch_loss = 0.0
        for s in range(0, n, batch):
            idx = idx_all[s:s + batch]
            xb, yb = x[idx], y[idx]
            acts = forward(m, ws, bs, xb)
            _, total, delta = head_loss_delta(m, acts[-1], yb, dt(1.0 / len(idx)))
            epoch_loss += total
            grads = []
            for l in range(len(ws) - 1, -1, -1):
                gw = acts[l].T @ delta
                gb = delta.sum(axis=0)
                if l > 0:
                    delta = (delta @ ws[l].T) * dact(name, acts[l])
                grads.append((l, gw, gb))
            for l, gw, gb in grads:
                ws[l] -= lr * gw
                bs[l] -= lr * gb
    return epoch_loss / n


def mean_loss(m, ws, bs, x, y):
    acts = forward(m, ws, bs, x)
    _, total, _ = head_loss_delta(m, acts[-1], y, 1.0)
    return total / len(x)


def blas_kernel():
    info = threadpool_info()
    return ";".join(f"{i.get('internal_api')}:{i.get('architecture')}:{i.get('version')}" for i in info)


def main():
    cmd = sys.argv[1]
    if cmd == "peak":
        threads = int(sys.argv[2])
        out = {}
        with threadpool_limits(limits=threads):
            for dt, tag in [(np.float32, "f32"), (np.float64, "f64")]:
                best = 0.0
                # The products of W3 (the widest workload): forward, weight
                # gradient, and a square size for comparison.
                for (mm, kk, nn) in [(128, 784, 256), (784, 128, 256), (128, 256, 10), (512, 512, 512)]:
                    rng = np.random.default_rng(1)
                    a = rng.standard_normal((mm, kk)).astype(dt)
                    b = rng.standard_normal((kk, nn)).astype(dt)
                    c = a @ b
                    reps = max(3, int(2e9 / (2 * mm * kk * nn)))
                    t0 = time.perf_counter()
                    for _ in range(reps):
                        np.matmul(a, b, out=c)
                    t = time.perf_counter() - t0
                    g = 2 * mm * kk * nn * reps / t / 1e9
                    out[f"{tag}_{mm}x{kk}x{nn}"] = g
                    best = max(best, g)
                out[tag] = best
        out["blas"] = blas_kernel()
        out["numpy"] = np.__version__
        print(json.dumps(out))
        return
    d, threads = sys.argv[2], int(sys.argv[3])
    m, dt, x, y, ws, bs, order = load(d)
    with threadpool_limits(limits=threads):
        if cmd == "train":
            seconds = float("inf")
            w0, b0 = [w.copy() for w in ws], [b.copy() for b in bs]
            for _ in range(m["runs"]):
                ws, bs = [w.copy() for w in w0], [b.copy() for b in b0]
                t0 = time.perf_counter()
                last_epoch = train(m, dt, x, y, ws, bs, order)
                seconds = min(seconds, time.perf_counter() - t0)
            final = mean_loss(m, ws, bs, x, y)
            samples = m["rows"] * m["epochs"]
        elif cmd == "cv":
            # Five folds of the workload (contiguous fifths held out), each
            # trained from the same starting weights with its own row orders;
            # no loss check (the fold plan differs from stratanet's).
            rng = np.random.default_rng(5)
            n = m["rows"]
            samples, t0, last_epoch = 0, time.perf_counter(), 0.0
            w0, b0 = [w.copy() for w in ws], [b.copy() for b in bs]
            for k in range(5):
                keep = np.r_[0:k * n // 5, (k + 1) * n // 5:n]
                xk, yk = x[keep], y[keep]
                mk = dict(m, rows=len(keep))
                orders = np.stack([rng.permutation(len(keep)) for _ in range(m["epochs"])])
                wk, bk = [w.copy() for w in w0], [b.copy() for b in b0]
                last_epoch += train(mk, dt, xk, yk, wk, bk, orders) / 5
                samples += len(keep) * m["epochs"]
            seconds = time.perf_counter() - t0
            final = last_epoch
        elif cmd == "predict":
            reps = m["repeats"]
            seconds = float("inf")
            for _ in range(m["runs"]):
                t0 = time.perf_counter()
                for _ in range(reps):
                    acts = forward(m, ws, bs, x)
                    p, _, _ = head_loss_delta(m, acts[-1], y, 1.0)
                seconds = min(seconds, time.perf_counter() - t0)
            final = float(p.sum(axis=0)[0]) / len(x)
            last_epoch = final
            samples = m["rows"] * reps
        else:
            raise SystemExit(f"unknown command {cmd}")
    print(json.dumps({
        "side": "numpy", "workload": m["name"] + ("-cv" if cmd == "cv" else ""), "threads": threads, "dtype": m["dtype"],
        "seconds": seconds, "samples": samples, "samples_per_s": samples / seconds,
        "final_loss": final, "last_epoch_loss": last_epoch, "peak_rss_kb": peak_rss_kb(),
        "blas": blas_kernel(),
    }))


if __name__ == "__main__":
    main()
