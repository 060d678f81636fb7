// A test instrument in its own process: writes `t_s,angle_rad` lines whose
// time is the host wall clock (s since the epoch), so a test can tell which
// samples were written more than a second before some moment.
// usage: node wallclock-writer.mjs FEED_PATH RATE_PER_S
import { openSync, writeSync, constants } from 'node:fs';

const [feed, rateText] = process.argv.slice(2);
const rate = Number(rateText ?? 1000);
const fd = openSync(feed, constants.O_WRONLY | constants.O_NOCTTY);
let i = 0;
const t0 = Date.now();
function tick() {
  const due = Math.floor(((Date.now() - t0) / 1000) * rate);
  let s = '';
  for (; i < due; i++) {
    const t = (t0 + (i / rate) * 1000) / 1000;
    s += `${t.toFixed(4)},${(1e-3 * Math.sin(i / 50)).toPrecision(9)}\n`;
  }
  if (s) {
    try {
      writeSync(fd, s);
    } catch {
      process.exit(3);
    }
  }
  setTimeout(tick, 5);
}
process.stdout.write('ready\n');
tick();
