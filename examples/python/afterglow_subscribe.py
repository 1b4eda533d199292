#!/usr/bin/env python3
"""Subscribe to an Afterglow node and receive intensity frames as numpy arrays.

Needs python3-protobuf and python3-numpy, and Python code generated from the schema:

    protoc --python_out=GEN -Iproto/src/main/proto proto/src/main/proto/afterglow/v1/afterglow.proto
    PYTHONPATH=GEN python3 examples/python/afterglow_subscribe.py --sensor parcel-line --count 20

Each frame arrives as a varint-length-delimited Envelope; pixels become a numpy array of shape
(height, width): uint8 for gray8 frames, float32 natural-log intensity for log-f32 frames.

For a node with TLS on its subscriber port, add --tls-ca CA.pem (and --tls-cert/--tls-key if the
node asks for client certificates). The node's certificate must name --host (DNS or IP).
"""
import os
import argparse
import socket
import ssl
import sys

import numpy as np

from afterglow.v1 import afterglow_pb2 as pb


def read_varint(sock_file):
    """Reads a protobuf base-128 varint; returns None at end of stream."""
    shift = 0
    value = 0
    while True:
        b = sock_file.read(1)
        if not b:
            return None
        value |= (b[0] & 0x7F) << shift
        if b[0] < 0x80:
            return value
        shift += 7
        if shift >= 35:
            raise ValueError("length prefix longer than 5 bytes")


def read_envelope(sock_file):
    length = read_varint(sock_file)
    if length is None:
        return None
    data = sock_file.read(length)
    if len(data) != length:
        return None
    env = pb.Envelope()
    env.ParseFromString(data)
    return env


def write_envelope(sock, env):
    body = env.SerializeToString()
    prefix = bytearray()
    n = len(body)
    while True:
        byte = n & 0x7F
        n >>= 7
        prefix.append(byte | (0x80 if n else 0))
        if not n:
            break
    sock.sendall(bytes(prefix) + body)


def wrap_tls(sock, args):
    """The connection over TLS 1.2 or 1.3, checking the node's certificate against --tls-ca and --host."""
    ctx = ssl.create_default_context(ssl.Purpose.SERVER_AUTH, cafile=args.tls_ca)
    ctx.minimum_version = ssl.TLSVersion.TLSv1_2
    if args.tls_cert:
        ctx.load_cert_chain(args.tls_cert, args.tls_key)
    try:
        return ctx.wrap_socket(sock, server_hostname=args.host)
    except (ssl.SSLError, OSError) as e:
        sock.close()
        print(f"TLS handshake with {args.host}:{args.port} failed: {e}", file=sys.stderr)
        return None


def frame_to_array(frame):
    """The frame's pixels as a (height, width) numpy array."""
    if frame.format == pb.PIXEL_FORMAT_LOG_F32:
        return np.frombuffer(frame.pixels, dtype="<f4").reshape(frame.height, frame.width)
    return np.frombuffer(frame.pixels, dtype=np.uint8).reshape(frame.height, frame.width)


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--host", default="127.0.0.1")
    ap.add_argument("--port", type=int, default=7303)
    ap.add_argument("--sensor", default="parcel-line")
    ap.add_argument("--rate", type=float, default=10.0, help="frames per second wanted (0: all)")
    ap.add_argument("--format", choices=["gray8", "log-f32"], default="gray8")
    ap.add_argument("--count", type=int, default=10, help="frames to receive (0: forever)")
    ap.add_argument("--timeout", type=float, default=10.0, help="seconds to wait for a frame")
    ap.add_argument("--token", default=os.environ.get("AFTERGLOW_SUBSCRIBER_TOKEN", ""),
                    help="subscriber token, for a node that lists subscriber tokens "
                         "(default: $AFTERGLOW_SUBSCRIBER_TOKEN, so it stays off the command line)")
    ap.add_argument("--tls-ca", help="connect over TLS, trusting the CA certificates in this PEM file")
    ap.add_argument("--tls-cert", help="client certificate (PEM) for a node that asks for one")
    ap.add_argument("--tls-key", help="private key of --tls-cert (PEM)")
    args = ap.parse_args()
    if (args.tls_cert or args.tls_key) and not args.tls_ca:
        ap.error("--tls-cert and --tls-key need --tls-ca")
    if bool(args.tls_cert) != bool(args.tls_key):
        ap.error("--tls-cert and --tls-key go together")

    sock = socket.create_connection((args.host, args.port), timeout=args.timeout)
    if args.tls_ca:
        sock = wrap_tls(sock, args)
        if sock is None:
            return 3
    env = pb.Envelope(schema_version=1)
    env.subscribe.sensor_id = args.sensor
    env.subscribe.token = args.token
    env.subscribe.rate_hz = args.rate
    env.subscribe.format = pb.PIXEL_FORMAT_LOG_F32 if args.format == "log-f32" else pb.PIXEL_FORMAT_GRAY8
    try:
        write_envelope(sock, env)
    except ssl.SSLError as e:
        print(f"TLS error: {e}", file=sys.stderr)
        return 3
    f = sock.makefile("rb")
    received = 0
    while args.count == 0 or received < args.count:
        try:
            msg = read_envelope(f)
        except ssl.SSLError as e:
            # With TLS 1.3 the node's verdict on a client certificate arrives after the handshake.
            print(f"TLS error: {e}", file=sys.stderr)
            return 3
        if msg is None:
            print("node closed the connection", file=sys.stderr)
            return 1
        if msg.HasField("error"):
            print(f"refused: {msg.error.code}: {msg.error.message}", file=sys.stderr)
            return 2
        frame = msg.intensity_frame
        img = frame_to_array(frame)
        p = frame.provenance
        print(f"frame seq={frame.sequence} t_us={frame.frame_time_us} shape={img.shape} dtype={img.dtype} "
              f"mean={float(img.mean()):.3f} min={float(img.min()):.3f} max={float(img.max()):.3f} "
              f"applied={p.events_applied} age_us={p.sensor_to_publish_us}")
        received += 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
