#!/usr/bin/env python3
"""Read (and write) Afterglow recording segments (.agrec) in Python, with numpy for the events.

The format is documented byte by byte in proto/src/main/proto/afterglow/v1/recording.proto:
signature b"AGREC\\r\\n\\0", then records of kind (1 byte), payload length (uint32 LE), payload and a
CRC-32C (uint32 LE) over kind, length and payload. Needs python3-protobuf, python3-numpy,
python3-crcmod (the CRC-32C), and Python code generated from the schema:

    protoc --python_out=GEN -Iproto/src/main/proto \\
        proto/src/main/proto/afterglow/v1/afterglow.proto proto/src/main/proto/afterglow/v1/recording.proto
    PYTHONPATH=GEN python3 examples/python/afterglow_recording.py summary RECORDING_FOLDER_OR_FILE

As a module:

    for arrival_us, envelope in read_recording("recordings/yard-7"):
        if envelope.HasField("events"):
            t, x, y, p = events_of(envelope.events)   # numpy arrays

A reader stops at the first torn (cut short) or corrupt record of a segment, reports it, and goes
on with the next segment; every record it returned is intact.
"""
import argparse
import glob
import os
import struct
import sys

import crcmod.predefined
import numpy as np

from afterglow.v1 import afterglow_pb2 as pb
from afterglow.v1 import recording_pb2 as rec

SIGNATURE = b"AGREC\r\n\x00"
HEADER, ENVELOPE, INDEX = 1, 2, 3
MAX_PAYLOAD = 64 << 20
FORMAT_VERSION = 1
_crc32c = crcmod.predefined.mkCrcFun("crc-32c")
EVENT_DTYPE = np.dtype([("dt", "<u4"), ("x", "<u2"), ("yp", "<u2")])


class RecordingError(Exception):
    """A file that is not a segment this reader knows."""


def read_records(path):
    """Yields (kind, offset, payload) of every intact record of one segment, header included.
    Returns (via StopIteration.value) None at a clean end, or a message saying where reading stopped."""
    with open(path, "rb") as f:
        data = f.read()
    if data[:len(SIGNATURE)] != SIGNATURE:
        raise RecordingError(f"{path}: not an Afterglow recording segment (no signature)")
    at = len(SIGNATURE)
    while at < len(data):
        if at + 5 > len(data):
            return f"{path}: torn record at byte {at} (the file ends inside it)"
        kind, length = struct.unpack_from("<BI", data, at)
        if length > MAX_PAYLOAD:
            return f"{path}: impossible record length at byte {at}"
        end = at + 5 + length + 4
        if end > len(data):
            return f"{path}: torn record at byte {at} (the file ends inside it)"
        (crc,) = struct.unpack_from("<I", data, end - 4)
        if _crc32c(data[at:end - 4]) != crc:
            return f"{path}: CRC-32C mismatch in the record at byte {at}"
        yield kind, at, data[at + 5:end - 4]
        at = end
    return None


def read_segment(path, problems=None):
    """The segment's RecordingHeader and a list of (arrival_us, Envelope) of its intact records.
    A damaged record ends the list; its description is appended to `problems` when given."""
    records = read_records(path)
    header = None
    out = []
    while True:
        try:
            kind, offset, payload = next(records)
        except StopIteration as stop:
            if stop.value and problems is not None:
                problems.append(stop.value)
            break
        if header is None:
            if kind != HEADER:
                raise RecordingError(f"{path}: the first record is not a header (kind {kind})")
            header = rec.RecordingHeader()
            header.ParseFromString(payload)
            if header.format_version != FORMAT_VERSION:
                raise RecordingError(f"{path}: format version {header.format_version}; this reader knows 1")
        elif kind == ENVELOPE:
            recorded = rec.RecordedEnvelope()
            recorded.ParseFromString(payload)
            envelope = pb.Envelope()
            envelope.ParseFromString(recorded.envelope)
            out.append((recorded.arrival_us, envelope))
    if header is None:
        raise RecordingError(f"{path}: no intact header record")
    return header, out


def segments_of(path):
    """The segment files of a recording: the file itself, or a folder's *.agrec in name order."""
    if os.path.isdir(path):
        return sorted(glob.glob(os.path.join(path, "*.agrec")))
    return [path]


def read_recording(path, problems=None):
    """Yields (arrival_us, Envelope) over all segments of a recording, in order."""
    for segment in segments_of(path):
        _, items = read_segment(segment, problems)
        yield from items


def events_of(packet):
    """t (uint64, us), x, y (uint16), p (uint16, 1 = ON) of an EventPacket, one numpy.frombuffer call."""
    ev = np.frombuffer(packet.events, dtype=EVENT_DTYPE)
    return ev["dt"].astype(np.uint64) + np.uint64(packet.time_base_us), ev["x"], ev["yp"] & 0x7FFF, ev["yp"] >> 15


def write_segment(path, hello, writer, start_unix_us, items, segment_number=0):
    """Writes one segment: the header, then (arrival_us, Envelope) items as envelope records.
    The hello's token is cleared. For tests and tools; the node writes its own recordings."""
    header = rec.RecordingHeader(format_version=FORMAT_VERSION, writer=writer,
                                 recording_start_unix_us=start_unix_us, segment_number=segment_number)
    header.hello.CopyFrom(hello)
    header.hello.token = ""

    def record(kind, payload):
        body = struct.pack("<BI", kind, len(payload)) + payload
        return body + struct.pack("<I", _crc32c(body))

    with open(path, "wb") as f:
        f.write(SIGNATURE)
        f.write(record(HEADER, header.SerializeToString()))
        for arrival_us, envelope in items:
            if envelope.HasField("hello") and envelope.hello.token:
                envelope = pb.Envelope.FromString(envelope.SerializeToString())
                envelope.hello.token = ""
            f.write(record(ENVELOPE, rec.RecordedEnvelope(arrival_us=arrival_us,
                                                          envelope=envelope.SerializeToString()).SerializeToString()))


def write_sample(path):
    """A seeded segment: a hello (with a token, which must not be written), 40 event packets, 4 frames."""
    rng = np.random.default_rng(20261203)
    hello = pb.SensorHello(sensor_id="py-cam", width=96, height=72, sends_frames=True, token="secret")
    items = [(0, pb.Envelope(schema_version=1, hello=hello))]
    for k in range(40):
        n = int(rng.integers(1, 500))
        ev = np.zeros(n, dtype=EVENT_DTYPE)
        ev["dt"] = np.sort(rng.integers(0, 10_000, n))
        ev["x"] = rng.integers(0, 96, n)
        ev["yp"] = rng.integers(0, 72, n) | (rng.integers(0, 2, n) << 15)
        packet = pb.EventPacket(sequence=k, time_base_us=3_000_000 + 10_000 * k, event_count=n, events=ev.tobytes())
        items.append((137 + 10_003 * k, pb.Envelope(schema_version=1, events=packet)))
        if k % 10 == 9:
            frame = pb.SensorFrame(sequence=k // 10, exposure_start_us=3_000_000 + 10_000 * k, width=96, height=72,
                                   exposure_end_us=3_005_000 + 10_000 * k, bit_depth=8,
                                   pixels=rng.integers(0, 256, 96 * 72, dtype=np.uint8).tobytes())
            items.append((140 + 10_003 * k, pb.Envelope(schema_version=1, sensor_frame=frame)))
    write_segment(path, hello, "afterglow_recording.py", 1_764_000_000_000_000, items)


def describe(arrival_us, envelope):
    """One line per envelope: what the tests compare between the Java and Python readers."""
    kind = envelope.WhichOneof("body")
    if kind == "events":
        t, x, y, p = events_of(envelope.events)
        checksum = int((t.astype(np.uint64) * np.uint64(3) + x.astype(np.uint64) * np.uint64(5)
                        + y.astype(np.uint64) * np.uint64(7) + p.astype(np.uint64)).sum(dtype=np.uint64))
        return f"{arrival_us} events seq={envelope.events.sequence} base={envelope.events.time_base_us} " \
               f"n={len(t)} first_t={int(t[0]) if len(t) else -1} sum={checksum}"
    if kind == "sensor_frame":
        fr = envelope.sensor_frame
        return f"{arrival_us} frame seq={fr.sequence} start={fr.exposure_start_us} {fr.width}x{fr.height} " \
               f"pixels_sum={int(np.frombuffer(fr.pixels, dtype=np.uint8).sum())}"
    if kind == "hello":
        return f"{arrival_us} hello {envelope.hello.sensor_id} {envelope.hello.width}x{envelope.hello.height} " \
               f"token={'yes' if envelope.hello.token else 'no'}"
    return f"{arrival_us} {kind}"


def main():
    a = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    sub = a.add_subparsers(dest="command", required=True)
    s = sub.add_parser("summary", help="what a recording holds")
    s.add_argument("path")
    d = sub.add_parser("dump", help="one line per envelope (and the problems found) into OUT")
    d.add_argument("path")
    d.add_argument("out")
    w = sub.add_parser("write-sample", help="a small seeded recording segment written by this module (tests)")
    w.add_argument("out")
    args = a.parse_args()
    if args.command == "write-sample":
        write_sample(args.out)
        return
    problems = []
    if args.command == "summary":
        first = segments_of(args.path)[0]
        header, _ = read_segment(first)
        counts = {}
        events = 0
        for _, env in read_recording(args.path, problems):
            kind = env.WhichOneof("body")
            counts[kind] = counts.get(kind, 0) + 1
            events += env.events.event_count if kind == "events" else 0
        print(f"sensor {header.hello.sensor_id} {header.hello.width}x{header.hello.height}, written by {header.writer}")
        print(f"{len(segments_of(args.path))} segment(s); " + ", ".join(f"{v} {k}" for k, v in sorted(counts.items()))
              + f"; {events} events")
    else:
        with open(args.out, "w") as f:
            for arrival_us, env in read_recording(args.path, problems):
                f.write(describe(arrival_us, env) + "\n")
    for p in problems:
        print("problem:", p, file=sys.stderr)


if __name__ == "__main__":
    main()
