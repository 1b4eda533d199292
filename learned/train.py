#!/usr/bin/python3
"""Trains the Ember reconstruction network on the project's own synthetic sensor and exports it.

One command does everything (see DEVELOPERS.md, "Retraining the learned reconstruction"); the
shipped model, Ember-3, is Ember-2's weights trained further on the current training mix:

    /usr/bin/python3 learned/train.py --jar node/target/afterglow.jar --init learned/ember-2.onnx \
        --iterations 1200 --lr 1e-3

1. makes the training sequences with `afterglow training-set` (randomised scenes, motions, speeds,
   contrast thresholds with mismatch, refractory losses, 0.1 .. 5 Hz/pixel background activity,
   hot pixels) unless they are already in --work;
2. bins each 50 ms window into a 5-bin voxel grid (voxel.py, the same rule as the node);
3. trains with truncated back-propagation through time on random crops, the loss being the
   quality report's own score turned into a loss: after a per-frame least-squares affine fit and
   the truth's min..max mapped to [0, 1], 1 - SSIM (Gaussian window sigma 1.5, K1 0.01, K2 0.03,
   Wang et al. 2004) plus the L1 error, plus a small L1 pull of the raw output to the
   standardised truth that pins the output's scale;
4. exports ONNX with the node's model contract (metadata included), the fixtures the Java test
   compares against, the training curve as a PNG and a JSON log with the settings and timings.

Runs on the CPU with Debian's python3-torch, python3-onnx, python3-numpy and python3-skimage.
"""
import argparse
import glob
import json
import multiprocessing
import os
import subprocess
import sys
import time

import numpy as np
import torch
import torch.nn.functional as F

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import model as ember  # noqa: E402
import voxel  # noqa: E402

REPO = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
MODEL_OUT = os.path.join(REPO, "filters/src/main/resources/dev/afterglow/filters/learned", ember.NAME + ".onnx")
FIXTURES_OUT = os.path.join(REPO, "filters/src/test/resources/dev/afterglow/filters/learned")


def parse_args():
    a = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    a.add_argument("--jar", default=os.path.join(REPO, "node/target/afterglow.jar"), help="the built node jar")
    a.add_argument("--work", default="/tmp/ember-work", help="folder for training data (reused when present)")
    a.add_argument("--sequences", type=int, default=800, help="training sequences (2 s each, 128x128)")
    a.add_argument("--held-out", type=int, default=32, help="of those, kept aside to watch for over-fitting")
    a.add_argument("--iterations", type=int, default=1800, help="optimiser steps")
    a.add_argument("--batch", type=int, default=8)
    a.add_argument("--crop", type=int, default=64, help="square crop side, a multiple of 8")
    a.add_argument("--chunk", type=int, default=20, help="windows per back-propagation chunk")
    a.add_argument("--lr", type=float, default=2e-3)
    a.add_argument("--seed", type=int, default=20261203)
    a.add_argument("--threads", type=int, default=2)
    a.add_argument("--out", default=MODEL_OUT)
    a.add_argument("--fixtures", default=FIXTURES_OUT)
    a.add_argument("--init", help="an Afterglow ONNX model of this architecture to start from (its weights), "
                                    "instead of a fresh initialisation")
    a.add_argument("--export-only", action="store_true",
                   help="no training: export --work/NAME.pt (a finished run's checkpoint) and write its fixtures")
    return a.parse_args()


def make_data(args):
    folder = os.path.join(args.work, "mix")
    have = len(glob.glob(os.path.join(folder, "mix-*.npz")))
    if have < args.sequences:
        subprocess.run(["java", "-jar", args.jar, "training-set", "--out", folder,
                        "--sequences", str(args.sequences), "--threads", str(args.threads)], check=True)
    return sorted(glob.glob(os.path.join(folder, "mix-*.npz")))[: args.sequences]


def load_sequence(path):
    d = dict(np.load(path))  # NpzFile decompresses an array on every access: load each once
    ends = d["frame_times"]
    h, w = d["frames"].shape[1:]
    grids = np.empty((len(ends), ember.BINS, h, w), dtype=np.float16)
    for k, g in enumerate(voxel.sequence_grids(d, ends, int(ends[0]), ember.BINS, h, w, fast=True)):
        grids[k] = g
    return grids, d["frames"].astype(np.float32)


def gaussian_window(sigma=1.5, radius=5):
    x = torch.arange(-radius, radius + 1, dtype=torch.float32)
    g = torch.exp(-x * x / (2 * sigma * sigma))
    g = g / g.sum()
    return (g[:, None] * g[None, :])[None, None]


WINDOW = gaussian_window()


def ssim(x, y):
    """Mean SSIM over valid windows, data range 1 (Wang et al. 2004; as the node's Ssim class)."""
    c1, c2 = 0.01 ** 2, 0.03 ** 2
    mx, my = F.conv2d(x, WINDOW), F.conv2d(y, WINDOW)
    sxx = F.conv2d(x * x, WINDOW) - mx * mx
    syy = F.conv2d(y * y, WINDOW) - my * my
    sxy = F.conv2d(x * y, WINDOW) - mx * my
    s = ((2 * mx * my + c1) * (2 * sxy + c2)) / ((mx * mx + my * my + c1) * (sxx + syy + c2))
    return s.mean(dim=(1, 2, 3))


def frame_loss(pred, truth):
    """The quality report's score as a loss, per sample: affine fit, truth range to [0, 1]."""
    b = pred.shape[0]
    p = pred.reshape(b, -1)
    t = truth.reshape(b, -1)
    pm, tm = p.mean(1, keepdim=True), t.mean(1, keepdim=True)
    cov = ((p - pm) * (t - tm)).mean(1, keepdim=True)
    var = ((p - pm) ** 2).mean(1, keepdim=True)
    a = cov / (var + 1e-6)
    fitted = a * (p - pm) + tm
    lo = t.min(1, keepdim=True).values
    rng = torch.clamp(t.max(1, keepdim=True).values - lo, min=0.05)
    f = ((fitted - lo) / rng).reshape(pred.shape)
    g = ((t - lo) / rng).reshape(pred.shape)
    sd = torch.clamp(t.std(1, keepdim=True), min=0.05)
    standard = ((t - tm) / sd).reshape(pred.shape)
    return (1 - ssim(f, g)) + (f - g).abs().mean(dim=(1, 2, 3)) + 0.1 * (pred - standard).abs().mean(dim=(1, 2, 3))


def batch_of(data, rng, batch, crop):
    vox, tru = [], []
    for _ in range(batch):
        grids, frames = data[rng.integers(len(data))]
        h, w = frames.shape[1:]
        y0, x0 = rng.integers(h - crop + 1), rng.integers(w - crop + 1)
        v = grids[:, :, y0:y0 + crop, x0:x0 + crop].astype(np.float32)
        f = frames[:, y0:y0 + crop, x0:x0 + crop]
        if rng.random() < 0.5:
            v, f = v[..., ::-1], f[..., ::-1]
        if rng.random() < 0.5:
            v, f = v[..., ::-1, :], f[..., ::-1, :]
        if rng.random() < 0.5:
            v, f = v.swapaxes(-1, -2), f.swapaxes(-1, -2)
        if rng.random() < 0.5:  # the negative scene: every polarity and the log image flip sign
            v, f = -v, -f
        vox.append(np.ascontiguousarray(v))
        tru.append(np.ascontiguousarray(f))
    return torch.from_numpy(np.stack(vox)), torch.from_numpy(np.stack(tru))


WARMUP_WINDOWS = 2


def held_out_loss(net, held):
    """Mean loss per window after the warm-up over whole held-out sequences (96x96 corner)."""
    vox = torch.from_numpy(np.stack([g[:, :, :96, :96].astype(np.float32) for g, _ in held]))
    tru = torch.from_numpy(np.stack([f[:, None, :96, :96] for _, f in held]))
    state = ember.zero_state(vox.shape[0], 96, 96)
    losses = []
    with torch.no_grad():
        for k in range(vox.shape[1]):
            image, state = net(vox[:, k], state)
            if k >= WARMUP_WINDOWS:
                losses.append(frame_loss(image, tru[:, k]).mean().item())
    return float(np.mean(losses))


def load_onnx_weights(net, path):
    """Copies the weights of an exported model of the same architecture into net (the exporter keeps
    the parameter names as initialiser names)."""
    import onnx
    from onnx import numpy_helper
    weights = {i.name: torch.from_numpy(numpy_helper.to_array(i).copy()) for i in onnx.load(path).graph.initializer}
    wanted = net.state_dict()
    missing = [k for k in wanted if k not in weights or weights[k].shape != wanted[k].shape]
    if missing:
        raise SystemExit(f"{path}: not this architecture; missing or differently shaped: {', '.join(missing)}")
    net.load_state_dict({k: weights[k] for k in wanted})


def export(net, path):
    import onnx
    net.eval()
    h, w = 48, 64
    args = (torch.zeros(1, ember.BINS, h, w), ember.zero_state(1, h, w))
    torch.onnx.export(net, args, path, input_names=["voxels", "state"], output_names=["log_image", "state_next"],
                      dynamic_axes={"voxels": {2: "H", 3: "W"}, "state": {2: "h", 3: "w"},
                                    "log_image": {2: "H", 3: "W"}, "state_next": {2: "h", 3: "w"}},
                      opset_version=13, do_constant_folding=True)
    m = onnx.load(path)
    for k, v in {"afterglow.contract": "1", "afterglow.bins": str(ember.BINS),
                 "afterglow.state_channels": str(ember.STATE_CHANNELS),
                 "afterglow.state_divisor": str(ember.DIVISOR),
                 "afterglow.pad_multiple": str(ember.PAD_MULTIPLE), "afterglow.model_name": ember.NAME}.items():
        e = m.metadata_props.add()
        e.key, e.value = k, v
    for out in m.graph.output:  # the exporter leaves the batch dimension symbolic; it is always 1
        dim = out.type.tensor_type.shape.dim[0]
        dim.ClearField("dim_param")
        dim.dim_value = 1
    m.producer_name = "afterglow learned/train.py"
    onnx.checker.check_model(m)
    onnx.save(m, path)


def write_fixtures(net, args, folder):
    """Small odd-sized event sequences, readout times and the network's output at each readout,
    computed here in float32 by the node's rules (windows of 50 ms on multiples of 50 ms of sensor
    time, each inferred once it has ended, the padding of the contract), for the Java path
    to reproduce (LearnedReconstructionTest). Readouts every 30 ms: some repeat, some infer."""
    os.makedirs(folder, exist_ok=True)
    for old in glob.glob(os.path.join(folder, "*.fixture-*.npz")):
        os.remove(old)
    src = os.path.join(args.work, "fixtures-src")
    if len(glob.glob(os.path.join(src, "*.npz"))) < 3:
        subprocess.run(["java", "-jar", args.jar, "training-set", "--out", src, "--sequences", "3",
                        "--first-seed", "900000", "--width", "50", "--height", "38", "--seconds", "0.4",
                        "--threads", "1"], check=True)
    net.eval()
    period = 50_000
    for path in sorted(glob.glob(os.path.join(src, "*.npz")))[:3]:
        d = dict(np.load(path))  # NpzFile decompresses an array on every access: load each once
        h, w = d["frames"].shape[1:]
        t = d["t"]
        first = int(t[0])
        readouts = first + 30_000 * np.arange(1, int((t[-1] - first) // 30_000) + 1, dtype=np.int64)
        origin = first // period * period  # windows sit on multiples of the period, as the node's
        window_ends = origin + period * np.arange(1, int((readouts[-1] - origin) // period) + 1, dtype=np.int64)
        state = ember.zero_state(1, ember.padded(h), ember.padded(w))
        outputs = [np.zeros((h, w), dtype=np.float32)]
        with torch.no_grad():
            for g in voxel.sequence_grids(d, window_ends, period, ember.BINS, h, w):
                image, state = ember.infer(net, g, state)
                outputs.append(image.astype(np.float32))
        done = np.searchsorted(window_ends, readouts, side="right")  # windows ended by each readout
        inferred = np.diff(np.concatenate([[0], done]))  # windows inferred since the previous readout
        events = np.stack([d["x"], d["y"], t, d["p"]], axis=1).astype(np.int64)
        name = ember.NAME + ".fixture-" + os.path.basename(path)[len("mix-"):]
        np.savez_compressed(os.path.join(folder, name), sensor=np.array([w, h], dtype=np.int64),
                            period_us=np.array([period], dtype=np.int64), events=events, readout_us=readouts,
                            log_image=np.stack([outputs[k] for k in done]), inferred=inferred.astype(np.int8))


def plot_curve(log, path):
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    fig, ax = plt.subplots(figsize=(7, 4))
    it = [r["iteration"] for r in log["curve"]]
    ax.plot(it, [r["train_loss"] for r in log["curve"]], label="training batches (smoothed)")
    held = [r for r in log["curve"] if "held_out_loss" in r]
    ax.plot([r["iteration"] for r in held], [r["held_out_loss"] for r in held], "o-", label="held-out sequences")
    ax.set_xlabel("optimiser step")
    ax.set_ylabel("loss: 1 - SSIM + L1 (+ scale pull)")
    ax.set_title(f"{ember.NAME} training on the synthetic sensor ({log['minutes']:.0f} min on this machine)")
    ax.grid(alpha=0.3)
    ax.legend()
    fig.tight_layout()
    fig.savefig(path, dpi=100)


def main():
    args = parse_args()
    torch.manual_seed(args.seed)
    torch.set_num_threads(args.threads)
    rng = np.random.default_rng(args.seed)
    if args.export_only:
        net = ember.Ember()
        net.load_state_dict(torch.load(os.path.join(args.work, ember.NAME + ".pt")))
        os.makedirs(os.path.dirname(args.out), exist_ok=True)
        export(net, args.out)
        write_fixtures(net, args, args.fixtures)
        print(f"exported {args.out} ({os.path.getsize(args.out)} bytes) and its fixtures")
        return
    started = time.time()
    files = make_data(args)
    with multiprocessing.Pool(args.threads) as pool:
        data = pool.map(load_sequence, files, chunksize=8)
    held, train = data[: args.held_out], data[args.held_out:]
    print(f"{len(train)} training and {len(held)} held-out sequences loaded in {time.time() - started:.0f} s", flush=True)
    net = ember.Ember()
    if args.init:
        load_onnx_weights(net, args.init)
        print(f"starting from the weights of {args.init}", flush=True)
    optimiser = torch.optim.Adam(net.parameters(), lr=args.lr)
    steps_per_batch = -(-train[0][0].shape[0] // args.chunk)
    batches = -(-args.iterations // steps_per_batch)
    schedule = torch.optim.lr_scheduler.OneCycleLR(optimiser, max_lr=args.lr, total_steps=batches * steps_per_batch,
                                                   pct_start=0.05)
    log = {"settings": vars(args), "curve": [], "model": ember.NAME}
    train_started = time.time()
    smooth = None
    for batch in range(batches):
        net.train()
        vox, tru = batch_of(train, rng, args.batch, args.crop)
        steps = vox.shape[1]
        state = ember.zero_state(args.batch, args.crop, args.crop)
        for c0 in range(0, steps, args.chunk):
            losses = []
            for k in range(c0, min(steps, c0 + args.chunk)):
                image, state = net(vox[:, k], state)
                if k >= WARMUP_WINDOWS:
                    losses.append(frame_loss(image, tru[:, k:k + 1]).mean())
            loss = torch.stack(losses).mean()
            optimiser.zero_grad()
            loss.backward()
            torch.nn.utils.clip_grad_norm_(net.parameters(), 1.0)
            optimiser.step()
            schedule.step()
            state = state.detach()
            smooth = loss.item() if smooth is None else 0.95 * smooth + 0.05 * loss.item()
        iteration = (batch + 1) * steps_per_batch
        row = {"iteration": iteration, "train_loss": smooth, "seconds": time.time() - train_started}
        if (batch + 1) % 25 == 0 or batch + 1 == batches:
            net.eval()
            row["held_out_loss"] = held_out_loss(net, held)
            print(f"step {iteration}: train {smooth:.4f} held-out {row['held_out_loss']:.4f} "
                  f"({row['seconds'] / 60:.1f} min)", flush=True)
        log["curve"].append(row)
    log["minutes"] = (time.time() - train_started) / 60
    log["total_minutes"] = (time.time() - started) / 60
    os.makedirs(os.path.dirname(args.out), exist_ok=True)
    torch.save(net.state_dict(), os.path.join(args.work, ember.NAME + ".pt"))
    export(net, args.out)
    write_fixtures(net, args, args.fixtures)
    here = os.path.dirname(os.path.abspath(__file__))
    with open(os.path.join(here, ember.NAME + "-training.json"), "w") as f:
        json.dump(log, f, indent=1)
    plot_curve(log, os.path.join(here, ember.NAME + "-training.png"))
    print(f"exported {args.out} ({os.path.getsize(args.out)} bytes); training took {log['minutes']:.1f} min")


if __name__ == "__main__":
    main()
