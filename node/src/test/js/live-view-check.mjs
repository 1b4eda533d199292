// Headless check of the node's live view page, run by LiveViewBrowserTest:
//   node live-view-check.mjs <page-url> <screenshot.png> [extra-seconds-before-screenshot]
// Drives Debian's Chromium through playwright-core (no browser download). Exits 0 when the frame
// canvas shows an image (pixel variance), the activity canvas shows both polarities' colours and
// the plots advance; prints one JSON line with what it measured either way.
import { chromium } from 'playwright-core';

const [url, screenshot, extraArg] = process.argv.slice(2);
if (!url || !screenshot) {
  console.error('usage: node live-view-check.mjs <page-url> <screenshot.png> [extra-seconds]');
  process.exit(2);
}
const extraSeconds = Number(extraArg || 0);

const browser = await chromium.launch({
  executablePath: '/usr/bin/chromium',
  args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
    '--disable-background-networking', '--disable-component-update', '--disable-sync'],
});
const result = { url };
let ok = false;
try {
  const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
  const pageErrors = [];
  page.on('pageerror', (e) => pageErrors.push(String(e)));
  await page.goto(url, { waitUntil: 'load', timeout: 15000 });
  const attr = (name) => page.evaluate((n) => Number(document.getElementById('live').dataset[n] || 0), name);
  await page.waitForFunction(() => Number(document.getElementById('live').dataset.frames) >= 3, null, { timeout: 20000 });
  await page.waitForFunction(() => Number(document.getElementById('live').dataset.points) >= 2, null, { timeout: 20000 });

  // Luminance variance of the frame canvas (ITU-R BT.601 luma weights), and pixels of the
  // activity canvas tinted towards the ON colour (red over blue) or the OFF colour (blue over red).
  // Polled: the first frames after connecting may show little.
  const measure = () => page.evaluate(() => {
    const f = document.getElementById('frame');
    const fd = f.getContext('2d').getImageData(0, 0, f.width, f.height).data;
    let sum = 0;
    let sum2 = 0;
    const n = fd.length / 4;
    for (let i = 0; i < fd.length; i += 4) {
      const y = 0.299 * fd[i] + 0.587 * fd[i + 1] + 0.114 * fd[i + 2];
      sum += y;
      sum2 += y * y;
    }
    const mean = sum / n;
    const a = document.getElementById('activity');
    const ad = a.getContext('2d').getImageData(0, 0, a.width, a.height).data;
    let on = 0;
    let off = 0;
    for (let i = 0; i < ad.length; i += 4) {
      if (ad[i] > ad[i + 2] + 40) {
        on++;
      } else if (ad[i + 2] > ad[i] + 40) {
        off++;
      }
    }
    return {
      frame: { width: f.width, height: f.height, mean, variance: sum2 / n - mean * mean },
      activity: { on, off },
    };
  });
  const deadline = Date.now() + 20000;
  let m = await measure();
  while (!(m.frame.variance > 25 && m.activity.on > 0 && m.activity.off > 0) && Date.now() < deadline) {
    await page.waitForTimeout(500);
    m = await measure();
  }
  result.frame = m.frame;
  result.activity = m.activity;
  result.pointsBefore = await attr('points');
  result.framesBefore = await attr('frames');
  await page.waitForTimeout(3000 + 1000 * extraSeconds);
  result.pointsAfter = await attr('points');
  result.framesAfter = await attr('frames');
  // The throughput series is drawn in green (#7cc6a4): count such pixels inside the plot area,
  // below the legend (top 22 CSS px) and right of the axis labels (left 58 CSS px).
  result.plotInk = await page.evaluate(() => {
    const c = document.getElementById('plotRate');
    const dpr = window.devicePixelRatio || 1;
    const x0 = Math.ceil(60 * dpr);
    const y0 = Math.ceil(24 * dpr);
    const d = c.getContext('2d').getImageData(x0, y0, c.width - x0, c.height - y0).data;
    let ink = 0;
    for (let i = 0; i < d.length; i += 4) {
      if (d[i + 3] > 0 && d[i + 1] > 150 && d[i + 1] > d[i] + 40) {
        ink++;
      }
    }
    return ink;
  });
  result.pageErrors = pageErrors;
  await page.screenshot({ path: screenshot, fullPage: true });
  result.screenshot = screenshot;
  const failures = [];
  if (!(result.frame.variance > 25)) failures.push('frame canvas is blank (variance ' + result.frame.variance + ')');
  if (!(result.activity.on > 0 && result.activity.off > 0)) failures.push('activity canvas lacks a polarity');
  if (!(result.pointsAfter > result.pointsBefore)) failures.push('plots did not advance');
  if (!(result.framesAfter > result.framesBefore)) failures.push('frames did not advance');
  if (!(result.plotInk > 0)) failures.push('throughput plot has no line');
  if (pageErrors.length > 0) failures.push('page errors: ' + pageErrors.join('; '));
  result.failures = failures;
  ok = failures.length === 0;
} catch (e) {
  result.error = String(e && e.stack ? e.stack : e);
} finally {
  await browser.close();
}
console.log(JSON.stringify(result));
process.exit(ok ? 0 : 1);
