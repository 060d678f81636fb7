// A test instrument in its own process that can fall silent without hanging
// up: writes `t_s,angle_rad` lines (a 20 s swing) at RATE lines per second
// into FEED_PATH, keeping the pty open throughout.
// usage: node alerts-pausing-writer.mjs FEED_PATH RATE_PER_S
// stdin: "pause" stops writing (fd stays open), "resume" carries on (the
//   sample clock skips the silence, as a device's would), "stop" exits.
// stdout: "ready", then "paused <epoch ms of the last write>" and
//   "resumed <epoch ms of the first write after>" lines.
import { openSync, writeSync, constants } from 'node:fs';
import { createInterface } from 'node:readline';

const [feed, rateText] = process.argv.slice(2);
const rate = Number(rateText ?? 50);
const fd = openSync(feed, constants.O_WRONLY | constants.O_NOCTTY);
const t0 = Date.now();
let i = 0;
let paused = false;
let lastWrite_ms = 0;
let announceResume = false;
createInterface({ input: process.stdin }).on('line', (l) => {
  const cmd = l.trim();
  if (cmd === 'pause') { paused = true; process.stdout.write(`paused ${lastWrite_ms}\n`); }
  if (cmd === 'resume') { paused = false; announceResume = true; }
  if (cmd === 'stop') process.exit(0);
});
function tick() {
  if (!paused) {
    const due = Math.floor(((Date.now() - t0) / 1000) * rate);
    if (i < due) {
      let s = '';
      // lines due during a pause are skipped: the device's clock ran on
      if (announceResume) i = due - 1;
      for (; i < due; i++) {
        const t = i / rate;
        s += `${t.toFixed(3)},${(1e-3 * Math.cos((2 * Math.PI * t) / 20)).toPrecision(9)}\n`;
      }
      try { writeSync(fd, s); } catch { process.exit(3); }
      lastWrite_ms = Date.now();
      if (announceResume) { announceResume = false; process.stdout.write(`resumed ${lastWrite_ms}\n`); }
    }
  }
  setTimeout(tick, 5);
}
process.stdout.write('ready\n');
tick();
