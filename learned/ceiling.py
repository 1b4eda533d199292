#!/usr/bin/python3
"""How far events alone can go on a scene: an estimate of the best SSIM an events-only method could
reach, to tell an unmet target from an unreachable one.

The oracle knows the true log image exactly at every pixel whose true log intensity has moved by
more than the contrast threshold C since the start (a pixel that can have produced a signal event,
by the event generation model), and only the mean of the truth at the others (a static background
makes no events, so its texture is not in the stream). It is scored as the quality report scores a
reconstruction (per-frame affine fit, truth range to [0, 1], SSIM; `evaluate.score`), at the
evaluations after 1 s, beside a flat image. Not a strict bound (a method may guess a static
background), but generous: it never pays for noise, threshold mismatch or refractory losses.

    java -jar node/target/afterglow.jar training-set --scene rink-shot --out /tmp/ceiling \\
        --sequences 1 --first-seed 1001 --width 320 --height 240 --seconds 6
    /usr/bin/python3 learned/ceiling.py /tmp/ceiling/*.npz
"""
import os
import sys

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from evaluate import score  # noqa: E402

C = 0.2  # the benchmark scenes' contrast threshold


def ceiling(path, eval_every=4, warmup_windows=20):
    d = dict(np.load(path))  # NpzFile decompresses an array on every access: load each once
    frames = d["frames"].astype(np.float64)
    lo, hi = frames[0].copy(), frames[0].copy()
    oracle, flat = [], []
    for k, truth in enumerate(frames):
        np.minimum(lo, truth, out=lo)
        np.maximum(hi, truth, out=hi)
        if k >= warmup_windows and (k + 1) % eval_every == 0:
            unknown = (hi - lo) <= C
            image = truth.copy()
            if unknown.any():
                image[unknown] = truth[unknown].mean()
            oracle.append(score(truth, image))
            flat.append(score(truth, np.zeros_like(truth)))
    return float(np.mean(oracle)), float(np.mean(flat)), float(1 - unknown.mean())


def main():
    for path in sys.argv[1:]:
        oracle, flat, known = ceiling(path)
        print(f"{os.path.basename(path):40s} oracle {oracle:.3f}  flat {flat:.3f}  oracle - flat {oracle - flat:+.3f}  "
              f"pixels that moved by the end {known:.0%}", flush=True)


if __name__ == "__main__":
    main()
