#!/usr/bin/python3
"""Scores a trained Ember checkpoint on benchmark scenes exported with `afterglow training-set --scene`,
the way the quality report does (per-frame affine fit, truth min..max to [0, 1], SSIM with a
Gaussian window, valid region only), beside a flat image. For tuning seeds during development;
the figures the README reports come from `afterglow assess` on validation seeds.

    /usr/bin/python3 learned/evaluate.py MODEL FILE.npz ...

MODEL is a training checkpoint (.pt) or an exported model of the same architecture (.onnx). Files
from the training mix also print how their camera moves.
"""
import sys
import os

import numpy as np
import torch

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import model as ember  # noqa: E402
import voxel  # noqa: E402
from skimage.metrics import structural_similarity  # noqa: E402


def score(truth, recon):
    """SSIM as the node's ImageQuality: affine fit, then truth range to [0, 1] (scikit-image)."""
    r = recon.astype(np.float64).ravel()
    t = truth.astype(np.float64).ravel()
    var = r.var()
    a = ((r - r.mean()) * (t - t.mean())).mean() / var if var > 0 else 0.0
    fitted = a * (recon - r.mean()) + t.mean()
    lo, hi = truth.min(), truth.max()
    rng = hi - lo if hi > lo else 1.0
    tt, ff = (truth - lo) / rng, (fitted - lo) / rng
    _, full = structural_similarity(tt, ff, data_range=1.0, gaussian_weights=True, sigma=1.5,
                                    use_sample_covariance=False, full=True)
    return full[5:-5, 5:-5].mean()


def evaluate(net, path, eval_every=4, warmup_windows=20):
    d = dict(np.load(path))  # NpzFile decompresses an array on every access: load each once
    ends = d["frame_times"]
    h, w = d["frames"].shape[1:]
    state = ember.zero_state(1, ember.padded(h), ember.padded(w))
    ours, flat = [], []
    with torch.no_grad():
        for k, g in enumerate(voxel.sequence_grids(d, ends, int(ends[0]), ember.BINS, h, w)):
            image, state = ember.infer(net, g, state)
            if k >= warmup_windows and (k + 1) % eval_every == 0:
                truth = d["frames"][k].astype(np.float64)
                ours.append(score(truth, image.astype(np.float64)))
                flat.append(score(truth, np.zeros_like(truth)))
    return float(np.mean(ours)), float(np.mean(flat)), MOTIONS[int(d["motion"][0])] if "motion" in d else ""


MOTIONS = ("pan", "spin", "swing")


def main():
    torch.set_num_threads(2)
    net = ember.Ember()
    if sys.argv[1].endswith(".onnx"):
        from train import load_onnx_weights
        load_onnx_weights(net, sys.argv[1])
    else:
        net.load_state_dict(torch.load(sys.argv[1]))
    net.eval()
    for path in sys.argv[2:]:
        ours, flat, motion = evaluate(net, path)
        print(f"{os.path.basename(path):40s} {motion:5s} ember {ours:.3f}  flat {flat:.3f}  gain {ours - flat:+.3f}",
              flush=True)


if __name__ == "__main__":
    main()
