"""Event voxel grid, exactly as the node's Java voxel grid builds it.

Binning with bilinear weights in time (Rebecq, Ranftl, Koltun & Scaramuzza, "High speed and high
dynamic range video with an event camera", TPAMI 2019, eq. 1), with one streaming change: the
window's time axis is normalised by the window bounds [t0, t1] instead of the window's first and
last event, so the node can bin each event as it arrives. Normalisation as published: the non-zero
cells are shifted and scaled to mean 0 and standard deviation 1.

The binning's float operations and their order match the Java code, so both bin to the same grid
bit for bit (float32 accumulation, in event order, lower bin before upper bin); the normalisation's
double sums may round differently in the last bit.
"""
import numpy as np


def bin_events(x, y, t, p, t0, t1, bins, height, width):
    """Voxel grid [bins, height, width] float32 (not normalised) of the events, window [t0, t1]."""
    grid = np.zeros(bins * height * width, dtype=np.float32)
    if len(t) == 0:
        return grid.reshape(bins, height, width)
    tau = (bins - 1) * (t - t0).astype(np.float64) / float(t1 - t0)
    tau = np.clip(tau, 0.0, bins - 1)
    i0 = np.floor(tau).astype(np.int64)
    f = (tau - i0).astype(np.float32)
    pf = p.astype(np.float32)
    lower = pf * (np.float32(1) - f)
    upper = pf * f
    pix = y.astype(np.int64) * width + x.astype(np.int64)
    has_upper = i0 + 1 < bins
    idx = np.empty(2 * len(t), dtype=np.int64)
    val = np.empty(2 * len(t), dtype=np.float32)
    idx[0::2] = i0 * height * width + pix
    val[0::2] = lower
    # An event in the last bin has no upper neighbour: add 0 to its own cell, which changes nothing.
    idx[1::2] = np.where(has_upper, (i0 + 1) * height * width + pix, idx[0::2])
    val[1::2] = np.where(has_upper, upper, np.float32(0))
    np.add.at(grid, idx, val)  # unbuffered, in index-array order
    return grid.reshape(bins, height, width)


def bin_events_fast(x, y, t, p, t0, t1, bins, height, width):
    """Like bin_events, but accumulated in float64 with np.bincount (many times faster): equal to
    it up to float32 rounding. For preparing training data only."""
    if len(t) == 0:
        return np.zeros((bins, height, width), dtype=np.float32)
    tau = np.clip((bins - 1) * (t - t0).astype(np.float64) / float(t1 - t0), 0.0, bins - 1)
    i0 = np.floor(tau).astype(np.int64)
    f = tau - i0
    pf = p.astype(np.float64)
    pix = y.astype(np.int64) * width + x.astype(np.int64)
    upper = np.minimum(i0 + 1, bins - 1)
    n = bins * height * width
    grid = np.bincount(i0 * height * width + pix, weights=pf * (1 - f), minlength=n)
    grid += np.bincount(upper * height * width + pix, weights=np.where(i0 + 1 < bins, pf * f, 0.0), minlength=n)
    return grid.astype(np.float32).reshape(bins, height, width)


def normalise(grid):
    """Non-zero cells to mean 0, standard deviation 1 (population); zero cells stay 0. In place."""
    flat = grid.reshape(-1)
    nz = np.flatnonzero(flat)
    if len(nz) == 0:
        return grid
    v = flat[nz].astype(np.float64)
    m = v.sum() / len(v)
    s = np.sqrt(((v - m) ** 2).sum() / len(v))
    flat[nz] = ((v - m) / s if s > 0 else v - m).astype(np.float32)
    return grid


def windows(t, window_ends):
    """Index ranges of the events in each window [t_prev, t_end), as the node's windows; t sorted."""
    ends = np.searchsorted(t, window_ends, side="left")
    starts = np.concatenate([[0], ends[:-1]])
    return starts, ends


def sequence_grids(d, ends, period, bins, height, width, fast=False):
    """Normalised grids of a sequence's windows [t_end - period, t_end) for each of `ends`, one
    at a time; `d` holds the arrays x, y, t, p. fast: bin_events_fast (training data only)."""
    binning = bin_events_fast if fast else bin_events
    starts, stops = windows(d["t"], ends)
    for k, end in enumerate(ends):
        s, e = starts[k], stops[k]
        yield normalise(binning(d["x"][s:e], d["y"][s:e], d["t"][s:e], d["p"][s:e], end - period, end,
                                bins, height, width))
