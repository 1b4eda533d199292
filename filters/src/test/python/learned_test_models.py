#!/usr/bin/python3
"""Tiny ONNX models that follow (or deliberately break) the learned-recon model contract, and a
fixture of expected outputs, for the tests of the learned-recon stage.

Run with Debian's interpreter and packages (python3-onnx, python3-numpy):

    /usr/bin/python3 filters/src/test/python/learned_test_models.py \
        filters/src/test/resources/dev/afterglow/filters/learned

It writes into that directory:
  tiny-contract.onnx          a model that follows the contract (B=5, S=4, D=4, P=8); see tiny_model()
  tiny-contract.fixture.npz   a seeded event stream, readout times and the log images the stage must
                              give, computed here with numpy (no ONNX Runtime): the voxel-grid rule and
                              the network's operators written out by hand
  refused/*.onnx              models that break the contract in one way each (file names say how)

The network is no reconstruction method: it only has to be small, cheap and easy to compute by
hand, and to use its recurrent state, so that the Java side (voxel grid, padding, state carried
between inferences, cropping) can be checked against values computed independently:

  log_image  = conv3x3(voxels; 5 -> 1 channel, zero padding 1) + bias
               + nearest-neighbour upsampling by D of state channel 0
  state_next = 0.5 * state + tanh(avgpool_DxD(conv1x1(voxels; 5 -> 4 channels)))

Everything is float32 with fixed, seeded weights. The files are committed; CI does not need
python3-onnx.
"""
import os
import sys

import numpy as np
import onnx
from onnx import TensorProto, helper, numpy_helper

B, S, D, P = 5, 4, 4, 8
OPSET = 13
MODEL_NAME = "tiny-contract"


def weights():
    rng = np.random.default_rng(20261203)
    conv = (rng.standard_normal((1, B, 3, 3)) * 0.3).astype(np.float32)
    bias = np.array([0.125], dtype=np.float32)
    mix = (rng.standard_normal((S, B, 1, 1)) * 0.5).astype(np.float32)
    return conv, bias, mix


def metadata(model, **overrides):
    props = {
        "afterglow.contract": "1",
        "afterglow.bins": str(B),
        "afterglow.state_channels": str(S),
        "afterglow.state_divisor": str(D),
        "afterglow.pad_multiple": str(P),
        "afterglow.model_name": MODEL_NAME,
    }
    for k, v in overrides.items():
        key = "afterglow." + k
        if v is None:
            props.pop(key, None)
        else:
            props[key] = v
    for k, v in props.items():
        entry = model.metadata_props.add()
        entry.key = k
        entry.value = v


def tiny_model(bins=B, state_channels=S, voxel_shape=None, log_name="log_image", log_scale_down=False,
               voxel_type=TensorProto.FLOAT, meta=None):
    """The contract's graph; the keyword arguments break it in one place for the refusal tests."""
    conv, bias, mix = weights()
    conv = conv[:, :bins] if bins <= B else np.concatenate([conv, conv[:, :bins - B]], axis=1)
    mix = mix[:, :bins] if bins <= B else np.concatenate([mix, mix[:, :bins - B]], axis=1)
    mix = mix[:state_channels] if state_channels <= S else np.concatenate([mix, mix[:state_channels - S]], axis=0)
    vshape = voxel_shape or [1, bins, "height", "width"]
    inputs = [
        helper.make_tensor_value_info("voxels", voxel_type, vshape),
        helper.make_tensor_value_info("state", TensorProto.FLOAT, [1, state_channels, "state_height", "state_width"]),
    ]
    outputs = [
        helper.make_tensor_value_info(log_name, TensorProto.FLOAT, [1, 1, "out_height", "out_width"]),
        helper.make_tensor_value_info("state_next", TensorProto.FLOAT, [1, state_channels, "state_height", "state_width"]),
    ]
    inits = [
        numpy_helper.from_array(conv, "conv_w"),
        numpy_helper.from_array(bias, "conv_b"),
        numpy_helper.from_array(mix, "mix_w"),
        numpy_helper.from_array(np.array([0], dtype=np.int64), "zero"),
        numpy_helper.from_array(np.array([1], dtype=np.int64), "one"),
        numpy_helper.from_array(np.array([1, 1, D, D], dtype=np.float32), "up_scales"),
        numpy_helper.from_array(np.array([0.5], dtype=np.float32), "half"),
    ]
    nodes = []
    source = "voxels"
    if voxel_type != TensorProto.FLOAT:
        nodes.append(helper.make_node("Cast", ["voxels"], ["voxels_f"], to=TensorProto.FLOAT))
        source = "voxels_f"
    nodes += [
        helper.make_node("Conv", [source, "conv_w", "conv_b"], ["edge"], pads=[1, 1, 1, 1]),
        helper.make_node("Slice", ["state", "zero", "one", "one"], ["state0"]),
        helper.make_node("Resize", ["state0", "", "up_scales"], ["state_up"], mode="nearest",
                         coordinate_transformation_mode="asymmetric", nearest_mode="floor"),
    ]
    if log_scale_down:
        nodes += [helper.make_node("Add", ["edge", "state_up"], ["full"]),
                  helper.make_node("AveragePool", ["full"], [log_name], kernel_shape=[2, 2], strides=[2, 2])]
    else:
        nodes.append(helper.make_node("Add", ["edge", "state_up"], [log_name]))
    nodes += [
        helper.make_node("Conv", [source, "mix_w"], ["mixed"]),
        helper.make_node("AveragePool", ["mixed"], ["pooled"], kernel_shape=[D, D], strides=[D, D]),
        helper.make_node("Tanh", ["pooled"], ["squashed"]),
        helper.make_node("Mul", ["state", "half"], ["kept"]),
        helper.make_node("Add", ["kept", "squashed"], ["state_next"]),
    ]
    graph = helper.make_graph(nodes, "tiny_contract", inputs, outputs, inits)
    model = helper.make_model(graph, opset_imports=[helper.make_opsetid("", OPSET)], producer_name="afterglow-tests")
    model.ir_version = 8
    metadata(model, **(meta or {}))
    onnx.checker.check_model(model)
    return model


# ---- numpy reference: the contract's voxel grid and the network above, without ONNX Runtime ----

def voxel_grid(events, t0, t1, width, height):
    """The contract's rule, float32 accumulation in event order (a plain loop, like the Java side)."""
    grid = np.zeros((B, height, width), dtype=np.float32)
    one = np.float32(1)
    for x, y, t, p in events:
        tau = (B - 1) * float(t - t0) / float(t1 - t0)
        tau = min(max(tau, 0.0), float(B - 1))
        i0 = int(np.floor(tau))
        f = np.float32(tau - i0)
        pf = np.float32(p)
        grid[i0, y, x] = np.float32(grid[i0, y, x] + pf * (one - f))
        if i0 + 1 < B:
            grid[i0 + 1, y, x] = np.float32(grid[i0 + 1, y, x] + pf * f)
    return grid


def normalise(grid):
    """Mean and population standard deviation of the non-zero cells, in double, in row-major order."""
    flat = grid.reshape(-1)
    cells = [float(v) for v in flat if v != 0]
    out = np.zeros_like(flat)
    if not cells:
        return out.reshape(grid.shape)
    total = 0.0
    for v in cells:
        total += v
    m = total / len(cells)
    sq = 0.0
    for v in cells:
        sq += (v - m) * (v - m)
    s = (sq / len(cells)) ** 0.5
    for i, v in enumerate(flat):
        if v != 0:
            out[i] = np.float32((float(v) - m) / s) if s > 0 else np.float32(float(v) - m)
    return out.reshape(grid.shape)


def network(voxels, state):
    """voxels [B, Hp, Wp], state [S, Hp/D, Wp/D] -> log image [Hp, Wp], next state; in float64."""
    conv, bias, mix = weights()
    v = voxels.astype(np.float64)
    hp, wp = v.shape[1:]
    padded = np.zeros((B, hp + 2, wp + 2))
    padded[:, 1:-1, 1:-1] = v
    edge = np.full((hp, wp), float(bias[0]))
    for b in range(B):
        for dy in range(3):
            for dx in range(3):
                edge += float(conv[0, b, dy, dx]) * padded[b, dy:dy + hp, dx:dx + wp]
    up = np.repeat(np.repeat(state[0].astype(np.float64), D, axis=0), D, axis=1)
    log_image = edge + up
    mixed = np.einsum("sb,byx->syx", mix[:, :, 0, 0].astype(np.float64), v)
    pooled = mixed.reshape(S, hp // D, D, wp // D, D).mean(axis=(2, 4))
    state_next = 0.5 * state.astype(np.float64) + np.tanh(pooled)
    return log_image.astype(np.float32), state_next.astype(np.float32)


def fixture(path):
    """A seeded stream through the stage's rules: windows on the sensor's clock, reuse, padding, cropping."""
    width, height = 13, 10                     # not multiples of P: padded to 16 x 16
    period_us = 10_000                         # rate 100 Hz
    hp, wp = -(-height // P) * P, -(-width // P) * P
    rng = np.random.default_rng(7)
    n = 600
    times = np.sort(rng.integers(1_000, 41_000, size=n))
    events = np.stack([rng.integers(0, width, n), rng.integers(0, height, n), times,
                       np.where(rng.random(n) < 0.5, -1, 1)], axis=1).astype(np.int64)
    # 4 ms apart (some readouts repeat, some infer), then a 16 ms gap over which two windows end
    readouts = np.concatenate([np.arange(4_000, 24_001, 4_000), [40_000, 44_000, 52_000]]).astype(np.int64)
    state = np.zeros((S, hp // D, wp // D), dtype=np.float32)
    last = np.zeros((height, width), dtype=np.float32)
    t0 = int(events[0, 2]) // period_us * period_us  # window k is [t0 + k period, t0 + (k + 1) period)
    k = 0
    images, inferred = [], []
    for T in readouts:
        new = 0
        while t0 + (k + 1) * period_us <= T:   # every window ended by T, quiet ones too, in order
            a, b = t0 + k * period_us, t0 + (k + 1) * period_us
            window = [tuple(int(v) for v in e) for e in events if a <= e[2] < b]
            grid = normalise(voxel_grid(window, a, b, width, height))
            padded = np.zeros((B, hp, wp), dtype=np.float32)
            padded[:, :height, :width] = grid
            log_image, state = network(padded, state)
            last = log_image[:height, :width]
            k += 1
            new += 1
        inferred.append(new)                   # windows inferred since the previous readout
        images.append(last.copy())
    np.savez(path, sensor=np.array([width, height], dtype=np.int64), period_us=np.array([period_us], dtype=np.int64),
             events=events, readout_us=readouts, log_image=np.stack(images).astype(np.float32),
             inferred=np.array(inferred, dtype=np.int8))


def main(out):
    os.makedirs(os.path.join(out, "refused"), exist_ok=True)
    onnx.save(tiny_model(), os.path.join(out, MODEL_NAME + ".onnx"))
    fixture(os.path.join(out, MODEL_NAME + ".fixture.npz"))
    refused = {
        # voxels has 3 bins where the metadata says 5
        "bins-mismatch": tiny_model(bins=3),
        # state has 3 channels where the metadata says 4
        "state-channels-mismatch": tiny_model(state_channels=3),
        # the first output is called "image", not "log_image"
        "wrong-output-name": tiny_model(log_name="image"),
        # no afterglow.contract entry
        "no-contract": tiny_model(meta={"contract": None}),
        # afterglow.bins is not a number
        "bins-not-a-number": tiny_model(meta={"bins": "five"}),
        # P = 6 is not a multiple of D = 4
        "pad-not-multiple": tiny_model(meta={"pad_multiple": "6"}),
        # voxels is float64, not float32
        "voxels-double": tiny_model(voxel_type=TensorProto.DOUBLE),
        # spatial size fixed at 32 x 32 in the file
        "fixed-size": tiny_model(voxel_shape=[1, B, 32, 32]),
        # declares symbolic output sizes but gives log_image at half the input's size
        "half-size-output": tiny_model(log_scale_down=True),
    }
    for name, model in refused.items():
        onnx.save(model, os.path.join(out, "refused", name + ".onnx"))


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else ".")
