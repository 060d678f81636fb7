/** `fibrewatch ports [--json]`: serial devices found by scanning /dev (no udevadm needed). */
import { listPorts, preferredPath } from '../../../drivers/ports.js';
import { table } from '../../display/format.js';

export async function portsCommand(opts: { json?: boolean }): Promise<void> {
  const ports = await listPorts();
  if (opts.json) {
    process.stdout.write(JSON.stringify(ports.map((p) => ({ ...p, use: preferredPath(p) })), null, 2) + '\n');
    return;
  }
  if (!ports.length) {
    process.stderr.write('no serial devices found (looked in /dev/serial/by-id and /dev/tty{USB,ACM,S,AMA}*)\n');
    return;
  }
  process.stdout.write(table(['device', 'kind', 'put this in input.device'], ports.map((p) => [p.path, p.kind, preferredPath(p)])));
}
