// The writing end of a test pseudo-terminal, run as its own process: writing
// to a pty synchronously from the process that also reads the other end can
// deadlock (docs/dependencies.md), so tests drive the feed side from here.
//
// usage: node pty-writer.mjs FEED_PATH '{"start":0,"count":1000,"rate_per_s":0,"waitGo":false}'
//   start       first line index (default 0)
//   count       lines to write (default: until the pty goes away)
//   rate_per_s  lines per second, 0 = as fast as the pty takes them (default 0)
//   waitGo      open the feed, print "ready", then wait for "go" on stdin (default false)
//   reopen      when the pty goes away, wait for the path to come back and carry on; lines due
//               meanwhile are skipped, as an instrument's output is lost while unplugged (default false)
//   bytes_b64   write these raw bytes instead of lines
//   file        write the lines of this file (one sample each, e.g. the simulator's output) instead of
//               the test stream; count defaults to the file's lines
//   waitPath_s  how long to wait for FEED_PATH to appear, seconds (default 10)
// stdin: "go" starts a waitGo writer; "stop" ends the writing after the current batch.
// stdout: "ready" once open, then one JSON line {"written":N,"reopens":K,"skipped":S,"error"?:CODE} at the end;
//   lines 0…written−1 (offset by start) were written or, with reopen, skipped while away (S of them).
// exit 0 when done, 3 when the pty went away (EIO/ENXIO), 2 on bad usage.
import { openSync, closeSync, writeSync, existsSync, readFileSync, constants } from 'node:fs';
import { createInterface } from 'node:readline';

/** Line i of the test stream; test/helpers/pty.ts `writerLine` must match. */
function writerLine(i) {
  return `${i},${((i * 7919) % 10007) / 10007}\n`;
}

const sleep = (ms) => new Promise((r) => setTimeout(r, ms));

async function main() {
  const [feed, specText] = process.argv.slice(2);
  if (!feed) {
    process.stderr.write('pty-writer: missing FEED_PATH\n');
    process.exit(2);
  }
  const spec = JSON.parse(specText ?? '{}');
  const start = spec.start ?? 0;
  const fileLines = spec.file ? readFileSync(spec.file, 'latin1').split('\n').filter((l) => l.length > 0 && !l.startsWith('#')).map((l) => l + '\n') : undefined;
  const line = fileLines ? (i) => fileLines[i] : writerLine;
  const count = spec.count ?? (fileLines ? fileLines.length - start : Infinity);
  const rate = spec.rate_per_s ?? 0;
  const deadline = Date.now() + (spec.waitPath_s ?? 10) * 1000;
  while (!existsSync(feed)) {
    if (Date.now() > deadline) {
      process.stderr.write(`pty-writer: ${feed} did not appear\n`);
      process.exit(2);
    }
    await sleep(10);
  }
  // O_NOCTTY: never let the pty become our controlling terminal (its hang-up would SIGHUP us).
  const open = () => openSync(feed, constants.O_WRONLY | constants.O_NOCTTY);
  let fd = open();
  let go = !spec.waitGo;
  let stop = false;
  let wakeGo = () => {};
  createInterface({ input: process.stdin }).on('line', (l) => {
    if (l.trim() === 'go') { go = true; wakeGo(); }
    if (l.trim() === 'stop') { stop = true; go = true; wakeGo(); }
  });
  process.stdout.write('ready\n');
  if (!go) await new Promise((resolve) => (wakeGo = resolve));
  let written = 0;
  let reopens = 0;
  let skipped = 0;
  const finish = (code, error) => {
    process.stdout.write(JSON.stringify(error ? { written, reopens, skipped, error } : { written, reopens, skipped }) + '\n', () => process.exit(code));
  };
  const put = (buf) => {
    let off = 0;
    while (off < buf.length) off += writeSync(fd, buf, off, buf.length - off);
  };
  const gone = (e) => e.code === 'EIO' || e.code === 'ENXIO' || e.code === 'EBADF';
  if (spec.bytes_b64 !== undefined) {
    try {
      const buf = Buffer.from(spec.bytes_b64, 'base64');
      put(buf);
      written = buf.length;
      return finish(0);
    } catch (e) {
      if (gone(e)) return finish(3, e.code);
      throw e;
    }
  }
  const t0 = performance.now();
  while (written < count && !stop) {
    // lines due by now (rate) or a batch of 1000 (as fast as possible)
    const due = rate > 0 ? Math.min(count, Math.floor(((performance.now() - t0) / 1000) * rate) + 1) : Math.min(count, written + 1000);
    if (due > written) {
      let s = '';
      for (let i = written; i < due; i++) s += line(start + i);
      try {
        put(Buffer.from(s, 'latin1'));
        written = due;
      } catch (e) {
        if (!gone(e)) throw e;
        if (!spec.reopen) return finish(3, e.code);
        try { closeSync(fd); } catch { /* already gone */ }
        const until = Date.now() + (spec.waitPath_s ?? 10) * 1000;
        for (;;) {
          if (stop) return finish(0);
          if (Date.now() > until) return finish(3, e.code);
          await sleep(5);
          try { fd = open(); break; } catch { /* not back yet */ }
        }
        reopens++;
        // skip what fell due while away
        const resume = Math.max(due, rate > 0 ? Math.min(count, Math.floor(((performance.now() - t0) / 1000) * rate)) : 0);
        skipped += resume - written;
        written = resume;
      }
    }
    await (rate > 0 ? sleep(5) : new Promise((r) => setImmediate(r)));
  }
  finish(0);
}

await main();
