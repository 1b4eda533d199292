"""Reads Afterglow wire data the way a Python user would; driven by the proto module's tests.

  read_events.py events EVENTS_FILE TIME_BASE_US OUT_FILE
      Decodes a file of 8-byte event records (EventPacket.events) with one numpy.frombuffer
      call, as afterglow.proto documents, and writes one "t x y p" line per event.

  read_events.py envelopes STREAM_FILE GENERATED_DIR OUT_FILE
      Reads a stream of varint-length-delimited Envelope messages with the Python classes that
      protoc generated into GENERATED_DIR, and writes a few fields of each, one line per
      envelope, followed by the decoded events of each event packet.

Needs only numpy (events) and the protobuf runtime (envelopes).
"""
import sys

import numpy

# The record layout from afterglow.proto: dt uint32, x uint16, yp uint16, all little-endian.
EVENT_DTYPE = numpy.dtype([('dt', '<u4'), ('x', '<u2'), ('yp', '<u2')])


def decode_events(data, time_base_us):
    """Returns t (uint64, microseconds), x, y, p arrays for the records in `data`."""
    if EVENT_DTYPE.itemsize != 8:
        raise SystemExit('record dtype is %d bytes, not 8' % EVENT_DTYPE.itemsize)
    ev = numpy.frombuffer(data, dtype=EVENT_DTYPE)
    t = ev['dt'].astype(numpy.uint64) + time_base_us
    y = ev['yp'] & 0x7FFF
    p = ev['yp'] >> 15
    return t, ev['x'], y, p


def event_lines(t, x, y, p):
    return ['%d %d %d %d' % row for row in zip(t.tolist(), x.tolist(), y.tolist(), p.tolist())]


def read_varint(data, pos):
    """Base-128 varint, least significant 7-bit group first, high bit = more bytes follow."""
    value = 0
    shift = 0
    while True:
        if pos >= len(data):
            raise SystemExit('stream ends inside a length prefix')
        b = data[pos]
        pos += 1
        value |= (b & 0x7F) << shift
        if not b & 0x80:
            return value, pos
        shift += 7
        if shift > 63:
            raise SystemExit('length prefix longer than 10 bytes')


def describe(index, env):
    kind = env.WhichOneof('body')
    head = '%d %s v%d' % (index, kind, env.schema_version)
    if kind == 'hello':
        h = env.hello
        return '%s sensor_id=%s width=%d height=%d tick_ns=%d epoch_us=%d sends_frames=%s' % (
            head, h.sensor_id, h.width, h.height, h.clock.tick_ns, h.clock.epoch_us, h.sends_frames)
    if kind == 'events':
        e = env.events
        return '%s sequence=%d time_base_us=%d event_count=%d bytes=%d sensor_id=%s' % (
            head, e.sequence, e.time_base_us, e.event_count, len(e.events), e.sensor_id)
    if kind == 'sensor_frame':
        f = env.sensor_frame
        return '%s sequence=%d exposure_end_us=%d bit_depth=%d pixels=%d' % (
            head, f.sequence, f.exposure_end_us, f.bit_depth, len(f.pixels))
    if kind == 'intensity_frame':
        f = env.intensity_frame
        pv = f.provenance
        stages = ','.join('%s:%d/%d' % (s.stage, s.events_removed, s.events_in) for s in pv.stages)
        return ('%s sequence=%d frame_time_us=%d format=%d region=%d,%d,%d,%d downscale=%d'
                ' events_applied=%d events_dropped=%d publish_host_time_ns=%d stages=%s') % (
            head, f.sequence, f.frame_time_us, f.format, f.region.x, f.region.y, f.region.width,
            f.region.height, f.downscale, pv.events_applied, pv.events_dropped,
            pv.publish_host_time_ns, stages)
    if kind == 'subscribe':
        s = env.subscribe
        return '%s sensor_id=%s rate_hz=%r format=%d region=%d,%d,%d,%d downscale=%d' % (
            head, s.sensor_id, s.rate_hz, s.format, s.region.x, s.region.y, s.region.width,
            s.region.height, s.downscale)
    if kind == 'error':
        return '%s code=%s' % (head, env.error.code)
    return head


def main(argv):
    if len(argv) != 5 or argv[1] not in ('events', 'envelopes'):
        raise SystemExit(__doc__)
    mode, src, arg, out_path = argv[1:]
    with open(src, 'rb') as f:
        data = f.read()
    lines = []
    if mode == 'events':
        lines = event_lines(*decode_events(data, int(arg)))
    else:
        sys.path.insert(0, arg)
        from afterglow.v1 import afterglow_pb2
        pos = 0
        index = 0
        packets = []
        while pos < len(data):
            length, pos = read_varint(data, pos)
            if pos + length > len(data):
                raise SystemExit('frame %d: %d bytes announced, %d left' % (index, length, len(data) - pos))
            env = afterglow_pb2.Envelope.FromString(data[pos:pos + length])
            pos += length
            lines.append(describe(index, env))
            if env.WhichOneof('body') == 'events':
                packets.append((index, env.events))
            index += 1
        for index, packet in packets:
            lines.append('events of %d' % index)
            lines.extend(event_lines(*decode_events(packet.events, packet.time_base_us)))
    with open(out_path, 'w', encoding='utf-8') as f:
        f.write('\n'.join(lines) + '\n')


if __name__ == '__main__':
    main(sys.argv)
