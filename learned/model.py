"""Ember: a small recurrent convolutional network that turns event voxel grids into log intensity.

Our own design for a CPU budget of about 0.5 G multiply-adds per inference at 346x260 (see
DEVELOPERS.md). The published method it follows: a recurrent network fed with event voxel grids,
trained on simulated events with ground truth (Rebecq et al. 2019; Scheerlinck et al. 2020 showed
that a much smaller network suffices). Choices and why:

- One ConvGRU cell (Ballas et al., ICLR 2016) at 1/4 resolution carries the memory: recurrence
  at low resolution is cheap, and a GRU needs one state tensor, not two.
- The previous output image is part of the state (packed to 1/4 resolution with a space-to-depth
  rearrangement, so the whole state is one tensor) and the network predicts a correction to it.
  A static scene produces no events, and the easiest thing for the network to learn is then to
  keep its picture: little flicker, no fading to grey.
- Two stride-2 encoder convolutions and a decoder that convolves before it upsamples (cheaper
  than after) with additive skips from the encoder; widths 16/24/24 keep full-resolution work small.

State layout: channels [0, HIDDEN) are the GRU state, [HIDDEN, HIDDEN + 16) the previous image,
space-to-depth by 4.
"""
import numpy as np
import torch
import torch.nn as nn
import torch.nn.functional as F

BINS = 5
HIDDEN = 24
DIVISOR = 4
PAD_MULTIPLE = 8
STATE_CHANNELS = HIDDEN + DIVISOR * DIVISOR
NAME = "ember-3"


class ConvGru(nn.Module):
    """Convolutional GRU cell: z, r = sigmoid(W*[x, h]); c = tanh(U*[x, r.h]); h' = (1 - z).h + z.c."""

    def __init__(self, inputs, hidden):
        super().__init__()
        self.gates = nn.Conv2d(inputs + hidden, 2 * hidden, 3, padding=1)
        self.candidate = nn.Conv2d(inputs + hidden, hidden, 3, padding=1)

    def forward(self, x, h):
        z, r = torch.sigmoid(self.gates(torch.cat([x, h], 1))).chunk(2, 1)
        c = torch.tanh(self.candidate(torch.cat([x, r * h], 1)))
        return (1 - z) * h + z * c


class Ember(nn.Module):
    def __init__(self):
        super().__init__()
        self.enc0 = nn.Conv2d(BINS + 1, 16, 3, padding=1)
        self.enc1 = nn.Conv2d(16, 24, 3, stride=2, padding=1)
        self.enc2 = nn.Conv2d(24, 24, 3, stride=2, padding=1)
        self.memory = ConvGru(24, HIDDEN)
        self.dec2 = nn.Conv2d(HIDDEN, 24, 3, padding=1)
        self.dec1 = nn.Conv2d(24, 16, 3, padding=1)
        self.head = nn.Conv2d(16, 1, 3, padding=1)
        nn.init.zeros_(self.head.weight)
        nn.init.zeros_(self.head.bias)

    def forward(self, voxels, state):
        h = state[:, :HIDDEN]
        previous = F.pixel_shuffle(state[:, HIDDEN:], DIVISOR)
        x0 = F.relu(self.enc0(torch.cat([voxels, previous], 1)))
        x1 = F.relu(self.enc1(x0))
        x2 = F.relu(self.enc2(x1))
        h = self.memory(x2, h)
        u1 = F.relu(F.interpolate(self.dec2(h), scale_factor=2, mode="bilinear", align_corners=False) + x1)
        u0 = F.relu(F.interpolate(self.dec1(u1), scale_factor=2, mode="bilinear", align_corners=False) + x0)
        image = previous + self.head(u0)
        state_next = torch.cat([h, F.pixel_unshuffle(image, DIVISOR)], 1)
        return image, state_next


def zero_state(batch, height, width):
    return torch.zeros(batch, STATE_CHANNELS, height // DIVISOR, width // DIVISOR)


def padded(n):
    """A sensor side rounded up to the padding multiple of the contract."""
    return -(-n // PAD_MULTIPLE) * PAD_MULTIPLE


def infer(net, grid, state):
    """One inference as the node runs it: the [BINS, h, w] grid zero-padded at the bottom and right,
    the output cropped back. Returns the [h, w] log image (numpy) and the next state."""
    _, h, w = grid.shape
    voxels = np.zeros((1, BINS, padded(h), padded(w)), dtype=np.float32)
    voxels[0, :, :h, :w] = grid
    image, state = net(torch.from_numpy(voxels), state)
    return image[0, 0, :h, :w].numpy(), state
