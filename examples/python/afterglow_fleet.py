#!/usr/bin/env python3
"""Talk to an Afterglow fleet through Apache Kafka: produce a sensor's messages straight to the
event topic, or read frames from the frame topic as numpy arrays.

Needs Debian's python3-confluent-kafka, python3-protobuf and python3-numpy, and Python code
generated from the schema:

    protoc --python_out=GEN -Iproto/src/main/proto proto/src/main/proto/afterglow/v1/afterglow.proto
    PYTHONPATH=GEN python3 examples/python/afterglow_fleet.py frames --kafka 127.0.0.1:9092 --count 20
    PYTHONPATH=GEN python3 examples/python/afterglow_fleet.py sensor --kafka 127.0.0.1:9092 --sensor lab-cam

Record layout (both topics): key = the sensor id in UTF-8; value = one afterglow.v1.Envelope in
protobuf binary (what a sensor sends over TCP, without the length prefix). On the event topic a
sensor sends its hello first and repeats it (here every second), so that a processing node that
takes the sensor over mid-stream can start it. Frame records carry the header "afterglow-member":
the node that made the frame.
"""
import argparse
import sys
import time

import numpy as np
from confluent_kafka import Consumer, Producer

from afterglow.v1 import afterglow_pb2 as pb

SCHEMA_VERSION = 1
EVENT = np.dtype([('dt', '<u4'), ('x', '<u2'), ('yp', '<u2')])


def hello(sensor_id, width, height):
    env = pb.Envelope(schema_version=SCHEMA_VERSION)
    env.hello.sensor_id = sensor_id
    env.hello.width = width
    env.hello.height = height
    return env


def event_packet(sensor_id, sequence, time_base_us, t_us, x, y, polarity):
    """An EventPacket of events at absolute times t_us (>= time_base_us, sorted), pixels x, y, polarity 0/1."""
    ev = np.zeros(len(t_us), dtype=EVENT)
    ev['dt'] = (np.asarray(t_us, dtype=np.uint64) - time_base_us).astype(np.uint32)
    ev['x'] = x
    ev['yp'] = (np.asarray(y, dtype=np.uint16) & 0x7FFF) | (np.asarray(polarity, dtype=np.uint16) << 15)
    env = pb.Envelope(schema_version=SCHEMA_VERSION)
    p = env.events
    p.sensor_id = sensor_id
    p.sequence = sequence
    p.time_base_us = time_base_us
    p.event_count = len(t_us)
    p.events = ev.tobytes()
    return env


def run_sensor(args):
    """A small synthetic sensor of our own: a bright bar sweeping across a dark field, 1 ms packets."""
    producer = Producer({'bootstrap.servers': args.kafka, 'linger.ms': 5})
    key = args.sensor.encode('utf-8')

    def send(env):
        producer.produce(args.topic, key=key, value=env.SerializeToString())
        producer.poll(0)

    rng = np.random.default_rng(args.seed)
    send(hello(args.sensor, args.width, args.height))
    start = time.monotonic()
    last_hello = start
    packets = int(args.seconds * 1000)
    sent = 0
    for k in range(packets):
        t0 = k * 1000
        # edge of the sweeping bar: one column per 2 ms, events spread over the packet
        col = (k // 2) % args.width
        n = args.height
        t = np.sort(rng.integers(t0, t0 + 1000, n)).astype(np.uint64)
        y = rng.permutation(args.height)[:n]
        x = np.full(n, col)
        pol = np.ones(n, dtype=np.uint16)
        send(event_packet(args.sensor, k, t0, t, x, y, pol))
        sent += n
        now = time.monotonic()
        if now - last_hello >= 1.0:
            send(hello(args.sensor, args.width, args.height))
            last_hello = now
        wait = start + (k + 1) / 1000 - time.monotonic()
        if wait > 0:
            time.sleep(wait)
    producer.flush(10)
    print(f"sensor {args.sensor}: sent {packets} packets, {sent} events to {args.topic}")


def run_frames(args):
    consumer = Consumer({'bootstrap.servers': args.kafka, 'group.id': args.group,
                         'auto.offset.reset': 'earliest' if args.from_start else 'latest',
                         'enable.auto.commit': False})
    consumer.subscribe([args.topic])
    received = 0
    deadline = time.monotonic() + args.timeout
    try:
        while received < args.count and time.monotonic() < deadline:
            msg = consumer.poll(0.5)
            if msg is None:
                continue
            if msg.error():
                print("kafka error:", msg.error(), file=sys.stderr)
                continue
            env = pb.Envelope()
            env.ParseFromString(msg.value())
            if env.WhichOneof('body') != 'intensity_frame':
                continue
            f = env.intensity_frame
            if args.sensor and f.sensor_id != args.sensor:
                continue
            if f.format == pb.PIXEL_FORMAT_LOG_F32:
                img = np.frombuffer(f.pixels, dtype='<f4').reshape(f.height, f.width)
            else:
                img = np.frombuffer(f.pixels, dtype=np.uint8).reshape(f.height, f.width)
            member = dict(msg.headers() or []).get('afterglow-member', b'').decode('utf-8')
            received += 1
            print(f"frame sensor={f.sensor_id} seq={f.sequence} t_us={f.frame_time_us} shape={img.shape} "
                  f"dtype={img.dtype} mean={float(img.mean()):.4f} age_us={f.provenance.sensor_to_publish_us} "
                  f"member={member}")
    finally:
        consumer.close()
    if received < args.count:
        print(f"only {received} of {args.count} frames within {args.timeout} s", file=sys.stderr)
        return 1
    return 0


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    sub = ap.add_subparsers(dest='command', required=True)
    s = sub.add_parser('sensor', help='produce a synthetic sensor straight to the event topic')
    s.add_argument('--kafka', default='127.0.0.1:9092')
    s.add_argument('--topic', default='afterglow.events')
    s.add_argument('--sensor', default='py-sensor')
    s.add_argument('--width', type=int, default=64)
    s.add_argument('--height', type=int, default=48)
    s.add_argument('--seconds', type=float, default=5.0)
    s.add_argument('--seed', type=int, default=3)
    f = sub.add_parser('frames', help='read frames from the frame topic')
    f.add_argument('--kafka', default='127.0.0.1:9092')
    f.add_argument('--topic', default='afterglow.frames')
    f.add_argument('--group', default='afterglow-python-frames')
    f.add_argument('--sensor', default='', help='only this sensor (default: all)')
    f.add_argument('--count', type=int, default=10)
    f.add_argument('--timeout', type=float, default=30.0)
    f.add_argument('--from-start', action='store_true', help='read the topic from its start, not only new frames')
    args = ap.parse_args()
    if args.command == 'sensor':
        run_sensor(args)
        return 0
    return run_frames(args)


if __name__ == '__main__':
    sys.exit(main())
