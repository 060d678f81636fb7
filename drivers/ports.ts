/**
 * Which serial ports this machine has, found by reading /dev and /sys.
 *
 * serialport's `SerialPort.list()` spawns udevadm, which containers and small
 * images lack (docs/dependencies.md), so we scan ourselves:
 *  - /dev/serial/by-id/*: udev's stable names (maker, model, serial number);
 *    each link is resolved and attached to the device it points at;
 *  - /dev/ttyUSB*, /dev/ttyACM*, /dev/ttyAMA*: these nodes exist only while
 *    the hardware does;
 *  - /dev/ttyS*: the kernel makes a fixed number (often 32) whether or not a
 *    UART sits behind them, so one is listed only when
 *    /sys/class/tty/ttySn/device/driver exists and its `type` is not 0
 *    (PORT_UNKNOWN) — the same test that tells a real 16550 from a phantom.
 *
 * Put the by-id path in the station file: ttyUSB0 can come back as ttyUSB1
 * after a replug, the by-id name does not change.
 */
import { readdir, readFile, realpath, stat } from 'node:fs/promises';
import { basename, join } from 'node:path';

export type PortKind = 'usb' | 'acm' | 'serial' | 'pty' | 'other';

export interface PortEntry {
  /** the device node, symlinks resolved (e.g. /dev/ttyUSB0) */
  path: string;
  /** stable udev name in /dev/serial/by-id, when there is one: prefer it in station files */
  byId?: string;
  kind: PortKind;
}

export interface ListPortsOptions {
  /** device directory; default /dev */
  dev?: string;
  /** sysfs tty class directory; default /sys/class/tty */
  sys?: string;
}

const KIND_ORDER: PortKind[] = ['usb', 'acm', 'serial', 'pty', 'other'];
const SCANNED = /^tty(USB|ACM|AMA|S)\d+$/;

/** Kind of a device node from its (resolved) path. */
export function portKind(path: string): PortKind {
  const name = basename(path);
  if (/^ttyUSB\d+$/.test(name)) return 'usb';
  if (/^ttyACM\d+$/.test(name)) return 'acm';
  if (/^tty(S|AMA)\d+$/.test(name)) return 'serial';
  if (/\/pts\/\d+$/.test(path)) return 'pty';
  return 'other';
}

/** The path to put in a station file: the by-id name when known, else the node. */
export function preferredPath(p: PortEntry): string {
  return p.byId ?? p.path;
}

async function list(dir: string): Promise<string[]> {
  try {
    return await readdir(dir);
  } catch {
    return []; // no such directory (no USB serial devices, or no udev)
  }
}

/** A ttyS node backed by hardware, judged from sysfs (see the file comment). */
async function isRealUart(sys: string, name: string): Promise<boolean> {
  try {
    await stat(join(sys, name, 'device', 'driver'));
  } catch {
    return false;
  }
  try {
    return (await readFile(join(sys, name, 'type'), 'utf8')).trim() !== '0';
  } catch {
    return true; // no `type` file: trust the driver link
  }
}

const natural = new Intl.Collator('en', { numeric: true });

/** Serial ports present now, USB first, with their by-id names; never throws for a missing directory. */
export async function listPorts(opts: ListPortsOptions = {}): Promise<PortEntry[]> {
  const dev = opts.dev ?? '/dev';
  const sys = opts.sys ?? '/sys/class/tty';
  const byPath = new Map<string, PortEntry>();

  const byIdDir = join(dev, 'serial', 'by-id');
  for (const name of (await list(byIdDir)).sort(natural.compare)) {
    const link = join(byIdDir, name);
    let target: string;
    try {
      target = await realpath(link);
    } catch {
      continue; // dangling: the device left after udev made the link
    }
    // Two by-id names for one node (rare): keep the first in sorted order.
    if (!byPath.has(target)) byPath.set(target, { path: target, byId: link, kind: portKind(target) });
  }

  for (const name of await list(dev)) {
    const m = SCANNED.exec(name);
    if (!m) continue;
    if (m[1] === 'S' && !(await isRealUart(sys, name))) continue;
    // resolved like the by-id targets, so both name the node the same way
    const path = await realpath(join(dev, name)).catch(() => join(dev, name));
    if (!byPath.has(path)) byPath.set(path, { path, kind: portKind(path) });
  }

  return [...byPath.values()].sort(
    (a, b) => KIND_ORDER.indexOf(a.kind) - KIND_ORDER.indexOf(b.kind) || natural.compare(a.path, b.path),
  );
}
