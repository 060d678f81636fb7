// The program a station's alerts.command runs in the delivery test: appends
// one JSON line {argv, alert} to OUT_FILE (argv[2]) with the alert it was
// given on stdin, so the test can check the argv arrived untouched by any
// shell and every alert was delivered, in order.
// usage: node alerts-command-sink.mjs OUT_FILE [ARGS…]
import { appendFileSync } from 'node:fs';

let input = '';
process.stdin.setEncoding('utf8');
process.stdin.on('data', (d) => (input += d));
process.stdin.on('end', () => {
  const [out, ...args] = process.argv.slice(2);
  appendFileSync(out, JSON.stringify({ args, alert: JSON.parse(input) }) + '\n');
});
