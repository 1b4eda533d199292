// Afterglow live view: vanilla JS and canvas, no dependencies.
// Binary messages follow dev.afterglow.node.live.LiveFrameCodec (little-endian, 32-byte header,
// then width*height gray bytes and width*height signed activity bytes); text messages are the JSON
// stats described in LiveStats.
'use strict';

(function () {
  const MAGIC = 0x564C4741; // "AGLV"
  const HEADER = 32;
  const WINDOW_S = 60;
  const COLORS = {
    bg: [10, 13, 16],
    on: [240, 180, 92],
    off: [94, 169, 214],
    grid: '#252d35',
    label: '#7f8d97',
  };

  const root = document.getElementById('live');
  const sensorSelect = document.getElementById('sensor');
  const fpsSelect = document.getElementById('fps');
  const conn = document.getElementById('conn');
  const frameCanvas = document.getElementById('frame');
  const activityCanvas = document.getElementById('activity');
  const frameInfo = document.getElementById('frameInfo');
  const activityInfo = document.getElementById('activityInfo');

  let socket = null;
  let reconnectTimer = null;
  let frames = 0;
  let points = 0;
  let lastFrameAt = 0;
  let shownFps = 0;
  let drawPending = false;

  // Time series over the last minute: t in seconds (performance clock), one value per series.
  const plots = {
    rate: {
      canvas: document.getElementById('plotRate'), log: false, unit: 'ev/s',
      series: [{ key: 'eventsPerS', name: 'events in', color: '#7cc6a4' }],
    },
    drops: {
      canvas: document.getElementById('plotDrops'), log: false, unit: '/s',
      series: [
        { key: 'shedEventsPerS', name: 'shed events', color: '#e48a6a' },
        { key: 'rejectedEventsPerS', name: 'late/outside events', color: '#c6a2d8' },
        { key: 'malformedPacketsPerS', name: 'malformed packets', color: '#d8d27a' },
      ],
    },
    latency: {
      canvas: document.getElementById('plotLatency'), log: true, unit: 'ms',
      series: [
        { key: 's2p.p50', name: 'sensor→publish p50', color: '#f0b45c', width: 2 },
        { key: 's2p.p99', name: 'p99', color: '#d98e3a', width: 1.3 },
        { key: 's2p.p999', name: 'p99.9', color: '#a86a2a', width: 1 },
        { key: 'a2a.p50', name: 'arrival→applied p50', color: '#5ea9d6', width: 2 },
        { key: 'a2a.p99', name: 'p99', color: '#3f83b0', width: 1.3 },
        { key: 'a2a.p999', name: 'p99.9', color: '#2d5f82', width: 1 },
      ],
    },
  };
  let samples = []; // {t, values: {key: number}}

  function params() {
    return new URLSearchParams(window.location.search);
  }

  function setConn(text, cls) {
    conn.textContent = text;
    conn.className = 'pill ' + (cls || '');
  }

  async function loadSensors() {
    try {
      const r = await fetch('/status', { cache: 'no-store' });
      const status = await r.json();
      const ids = status.sensors.map((s) => s.id);
      if (ids.length === 0) {
        setConn('no sensors yet', 'bad');
        setTimeout(loadSensors, 2000);
        return;
      }
      const wanted = params().get('sensor');
      sensorSelect.innerHTML = '';
      for (const id of ids) {
        const o = document.createElement('option');
        o.value = id;
        o.textContent = id;
        sensorSelect.appendChild(o);
      }
      sensorSelect.value = ids.includes(wanted) ? wanted : ids[0];
      const fps = params().get('fps');
      if (fps && [...fpsSelect.options].some((o) => o.value === fps)) {
        fpsSelect.value = fps;
      }
      connect();
    } catch (e) {
      setConn('node unreachable', 'bad');
      setTimeout(loadSensors, 2000);
    }
  }

  function connect() {
    clearTimeout(reconnectTimer);
    if (socket) {
      socket.onclose = null;
      socket.close();
    }
    const sensor = sensorSelect.value;
    const fps = fpsSelect.value;
    const q = new URLSearchParams({ sensor, fps });
    history.replaceState(null, '', '/live?' + q.toString());
    root.dataset.sensor = sensor;
    samples = [];
    const scheme = location.protocol === 'https:' ? 'wss:' : 'ws:';
    const ws = new WebSocket(scheme + '//' + location.host + '/live/ws?' + q.toString());
    ws.binaryType = 'arraybuffer';
    socket = ws;
    setConn('connecting');
    ws.onopen = () => setConn('live · ' + sensor, 'ok');
    ws.onmessage = (m) => {
      if (typeof m.data === 'string') {
        onStats(JSON.parse(m.data));
      } else {
        onFrame(m.data);
      }
    };
    ws.onclose = (e) => {
      setConn('disconnected' + (e.reason ? ': ' + e.reason : '') + ', retrying', 'bad');
      reconnectTimer = setTimeout(connect, 2000);
    };
  }

  function onFrame(buf) {
    const v = new DataView(buf);
    if (buf.byteLength < HEADER || v.getUint32(0, true) !== MAGIC || v.getUint16(4, true) !== 1) {
      return;
    }
    const factor = v.getUint16(6, true);
    const seq = Number(v.getBigUint64(8, true));
    const timeUs = Number(v.getBigInt64(16, true));
    const w = v.getUint16(24, true);
    const h = v.getUint16(26, true);
    const events = v.getUint32(28, true);
    const n = w * h;
    if (buf.byteLength < HEADER + 2 * n) {
      return;
    }
    const gray = new Uint8Array(buf, HEADER, n);
    const act = new Int8Array(buf, HEADER + n, n);
    drawGray(gray, w, h);
    drawActivity(act, w, h);
    const now = performance.now();
    if (lastFrameAt > 0) {
      const inst = 1000 / (now - lastFrameAt);
      shownFps = shownFps === 0 ? inst : 0.8 * shownFps + 0.2 * inst;
    }
    lastFrameAt = now;
    frames++;
    root.dataset.frames = String(frames);
    frameInfo.textContent = '#' + seq + ' · t=' + (timeUs / 1e6).toFixed(3) + ' s · ' + w + 'x' + h
        + (factor > 1 ? ' (1/' + factor + ')' : '');
    activityInfo.textContent = events.toLocaleString() + ' events';
  }

  function drawGray(gray, w, h) {
    sizeCanvas(frameCanvas, w, h);
    const ctx = frameCanvas.getContext('2d');
    const img = ctx.createImageData(w, h);
    const d = img.data;
    for (let i = 0, j = 0; i < gray.length; i++, j += 4) {
      const g = gray[i];
      d[j] = g;
      d[j + 1] = g;
      d[j + 2] = g;
      d[j + 3] = 255;
    }
    ctx.putImageData(img, 0, 0);
  }

  function drawActivity(act, w, h) {
    sizeCanvas(activityCanvas, w, h);
    const ctx = activityCanvas.getContext('2d');
    const img = ctx.createImageData(w, h);
    const d = img.data;
    const bg = COLORS.bg;
    for (let i = 0, j = 0; i < act.length; i++, j += 4) {
      const a = act[i];
      let r = bg[0];
      let g = bg[1];
      let b = bg[2];
      if (a !== 0) {
        const c = a > 0 ? COLORS.on : COLORS.off;
        // One event is clearly visible; more events saturate towards the full colour.
        const k = 1 - Math.exp(-Math.abs(a) / 2);
        const s = 0.35 + 0.65 * k;
        r += (c[0] - r) * s;
        g += (c[1] - g) * s;
        b += (c[2] - b) * s;
      }
      d[j] = r;
      d[j + 1] = g;
      d[j + 2] = b;
      d[j + 3] = 255;
    }
    ctx.putImageData(img, 0, 0);
  }

  function sizeCanvas(c, w, h) {
    if (c.width !== w || c.height !== h) {
      c.width = w;
      c.height = h;
    }
  }

  function onStats(s) {
    if (s.type !== 'stats') {
      return;
    }
    const t = performance.now() / 1000;
    const lat = s.latencyMs || {};
    const values = {
      eventsPerS: s.eventsPerS,
      shedEventsPerS: s.shedEventsPerS,
      rejectedEventsPerS: s.rejectedEventsPerS,
      malformedPacketsPerS: s.malformedPacketsPerS,
    };
    for (const [prefix, k] of [['s2p', 'sensorToPublish'], ['a2a', 'arrivalToApplied']]) {
      const p = lat[k] || {};
      values[prefix + '.p50'] = p.p50;
      values[prefix + '.p99'] = p.p99;
      values[prefix + '.p999'] = p.p999;
    }
    // The first message of a connection has no interval yet: it carries no rates.
    if (s.intervalS > 0) {
      samples.push({ t, values });
      points++;
      root.dataset.points = String(points);
    }
    while (samples.length > 0 && samples[0].t < t - WINDOW_S - 2) {
      samples.shift();
    }
    updateSide(s);
    scheduleDraw();
  }

  function row(table, key, value, cls) {
    const tr = document.createElement('tr');
    if (cls) {
      tr.className = cls;
    }
    const a = document.createElement('td');
    a.textContent = key;
    const b = document.createElement('td');
    b.textContent = value;
    tr.append(a, b);
    table.appendChild(tr);
  }

  function fmt(x, digits) {
    if (x === undefined || x === null || !isFinite(x)) {
      return '-';
    }
    const a = Math.abs(x);
    if (a >= 1e6) {
      return (x / 1e6).toFixed(2) + ' M';
    }
    if (a >= 1e3) {
      return (x / 1e3).toFixed(1) + ' k';
    }
    return x.toFixed(digits === undefined ? 1 : digits);
  }

  function updateSide(s) {
    document.getElementById('chain').textContent = s.chain;
    const stages = document.getElementById('stages');
    stages.innerHTML = '';
    for (const st of s.stages || []) {
      row(stages, st.name, '', 'stage');
      for (const [k, v] of Object.entries(st.params || {})) {
        row(stages, '  ' + k, v);
      }
    }
    const fr = document.getElementById('frames');
    fr.innerHTML = '';
    row(fr, 'readout rate', fmt(s.frameRateHz) + ' Hz');
    row(fr, 'published', fmt(s.framesPerS) + ' /s');
    row(fr, 'shown here', fmt(shownFps) + ' /s of ' + s.fps);
    row(fr, 'sensor', s.width + 'x' + s.height);
    row(fr, 'live image', s.liveWidth + 'x' + s.liveHeight + (s.factor > 1 ? ' (1/' + s.factor + ')' : ''));
    row(fr, 'live frames sent', String(s.liveSent));
    row(fr, 'live frames skipped', String(s.liveSkipped));
    const now = document.getElementById('now');
    now.innerHTML = '';
    row(now, 'events in', fmt(s.eventsPerS) + ' /s');
    row(now, 'shed', fmt(s.shedEventsPerS) + ' /s');
    row(now, 'late or outside', fmt(s.rejectedEventsPerS) + ' /s');
    row(now, 'malformed packets', fmt(s.malformedPacketsPerS) + ' /s');
    row(now, 'pending packets', String(s.pendingPackets));
    const l = s.latencyMs || {};
    if (l.sensorToPublish) {
      row(now, 'sensor→publish p50/p99', fmt(l.sensorToPublish.p50, 2) + ' / ' + fmt(l.sensorToPublish.p99, 2) + ' ms');
    }
    if (l.arrivalToApplied) {
      row(now, 'arrival→applied p50/p99', fmt(l.arrivalToApplied.p50, 2) + ' / ' + fmt(l.arrivalToApplied.p99, 2) + ' ms');
    }
  }

  function scheduleDraw() {
    if (!drawPending) {
      drawPending = true;
      requestAnimationFrame(() => {
        drawPending = false;
        for (const p of Object.values(plots)) {
          drawPlot(p);
        }
      });
    }
  }

  // A "nice" upper bound: 1, 2 or 5 times a power of ten.
  function niceMax(x) {
    if (!(x > 0)) {
      return 1;
    }
    const e = Math.pow(10, Math.floor(Math.log10(x)));
    for (const m of [1, 2, 5, 10]) {
      if (x <= m * e) {
        return m * e;
      }
    }
    return 10 * e;
  }

  function drawPlot(p) {
    const c = p.canvas;
    const dpr = window.devicePixelRatio || 1;
    const cw = Math.max(50, Math.round(c.clientWidth * dpr));
    const ch = Math.max(50, Math.round(c.clientHeight * dpr));
    if (c.width !== cw || c.height !== ch) {
      c.width = cw;
      c.height = ch;
    }
    const ctx = c.getContext('2d');
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    const W = cw / dpr;
    const H = ch / dpr;
    ctx.clearRect(0, 0, W, H);
    const left = 58;
    const right = 8;
    const top = 22;
    const bottom = 18;
    const pw = W - left - right;
    const ph = H - top - bottom;
    const now = performance.now() / 1000;

    let max = 0;
    let minPos = Infinity;
    for (const s of samples) {
      for (const ser of p.series) {
        const v = s.values[ser.key];
        if (v > 0) {
          max = Math.max(max, v);
          minPos = Math.min(minPos, v);
        }
      }
    }
    let y;
    const ticks = [];
    if (p.log) {
      const lo = Math.pow(10, Math.floor(Math.log10(isFinite(minPos) ? minPos : 0.01)));
      const hi = Math.pow(10, Math.ceil(Math.log10(max > 0 ? max : 1)));
      const hiAdj = hi <= lo ? lo * 10 : hi;
      const span = Math.log10(hiAdj) - Math.log10(lo);
      y = (v) => top + ph - ((Math.log10(Math.max(v, lo)) - Math.log10(lo)) / span) * ph;
      for (let d = lo; d <= hiAdj * 1.0001; d *= 10) {
        ticks.push(d);
      }
    } else {
      const top0 = niceMax(max * 1.05);
      y = (v) => top + ph - (v / top0) * ph;
      for (let i = 0; i <= 4; i++) {
        ticks.push((top0 * i) / 4);
      }
    }
    const x = (t) => left + pw - ((now - t) / WINDOW_S) * pw;

    ctx.font = '11px system-ui, sans-serif';
    ctx.lineWidth = 1;
    ctx.strokeStyle = COLORS.grid;
    ctx.fillStyle = COLORS.label;
    ctx.textAlign = 'right';
    ctx.textBaseline = 'middle';
    for (const v of ticks) {
      const yy = Math.round(y(v)) + 0.5;
      ctx.beginPath();
      ctx.moveTo(left, yy);
      ctx.lineTo(left + pw, yy);
      ctx.stroke();
      ctx.fillText(fmt(v, v < 1 ? 2 : 0), left - 6, yy);
    }
    ctx.textAlign = 'center';
    ctx.textBaseline = 'top';
    for (let s = 0; s <= WINDOW_S; s += 10) {
      const xx = Math.round(left + pw - (s / WINDOW_S) * pw) + 0.5;
      ctx.beginPath();
      ctx.moveTo(xx, top);
      ctx.lineTo(xx, top + ph);
      ctx.stroke();
      // Keep the end labels inside the canvas.
      ctx.textAlign = s === 0 ? 'right' : s === WINDOW_S ? 'left' : 'center';
      ctx.fillText(s === 0 ? 'now' : '-' + s + ' s', s === WINDOW_S ? xx - 12 : xx, top + ph + 3);
    }

    ctx.save();
    ctx.beginPath();
    ctx.rect(left, top, pw, ph);
    ctx.clip();
    for (const ser of p.series) {
      ctx.strokeStyle = ser.color;
      ctx.lineWidth = ser.width || 1.6;
      ctx.beginPath();
      let started = false;
      for (const s of samples) {
        const v = s.values[ser.key];
        if (v === undefined || v === null || !isFinite(v) || (p.log && v <= 0)) {
          started = false;
          continue;
        }
        if (started) {
          ctx.lineTo(x(s.t), y(v));
        } else {
          ctx.moveTo(x(s.t), y(v));
          started = true;
        }
      }
      ctx.stroke();
    }
    ctx.restore();

    // Legend along the top, with the latest value of each series.
    ctx.textAlign = 'left';
    ctx.textBaseline = 'middle';
    let lx = left;
    const last = samples.length > 0 ? samples[samples.length - 1].values : {};
    for (const ser of p.series) {
      const label = ser.name + ' ' + fmt(last[ser.key], p.log ? 2 : 0);
      ctx.fillStyle = ser.color;
      ctx.fillRect(lx, 7, 10, 3);
      ctx.fillStyle = COLORS.label;
      ctx.fillText(label, lx + 14, 9);
      lx += ctx.measureText(label).width + 28;
    }
    ctx.fillText(p.unit, 4, 9);
  }

  sensorSelect.addEventListener('change', connect);
  fpsSelect.addEventListener('change', connect);
  window.addEventListener('resize', scheduleDraw);
  // Keep the plots scrolling between stats messages.
  setInterval(scheduleDraw, 1000);
  loadSensors();
})();
