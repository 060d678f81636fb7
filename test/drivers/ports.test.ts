import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, realpathSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { listPorts, portKind, preferredPath } from '../../drivers/ports.js';
import { startPtyPair, type PtyPair } from '../helpers/pty.js';

let root: string;
let pty: PtyPair | undefined;

beforeEach(() => {
  root = realpathSync(mkdtempSync(join(tmpdir(), 'fw-ports-')));
});

afterEach(async () => {
  await pty?.stop();
  pty = undefined;
  rmSync(root, { recursive: true, force: true });
});

/**
 * A /dev and /sys/class/tty laid out as Linux does (names from the kernel's
 * tty drivers and udev's 60-serial.rules by-id naming; common practice, no
 * single source): one FTDI USB adapter, one CDC-ACM board, four ttyS nodes of
 * which only ttyS0 has a UART behind it.
 */
function fakeTree(): { dev: string; sys: string } {
  const dev = join(root, 'dev');
  const sys = join(root, 'sys');
  mkdirSync(join(dev, 'serial', 'by-id'), { recursive: true });
  for (const n of ['ttyUSB0', 'ttyACM0', 'ttyS0', 'ttyS1', 'ttyS2', 'ttyS3', 'tty0', 'ttyprintk', 'null']) writeFileSync(join(dev, n), '');
  symlinkSync('../../ttyUSB0', join(dev, 'serial', 'by-id', 'usb-FTDI_FT232R_USB_UART_A50285BI-if00-port0'));
  symlinkSync('../../ttyACM0', join(dev, 'serial', 'by-id', 'usb-Arduino__www.arduino.cc__0043_75833353035351F0E1A1-if00'));
  symlinkSync('../../ttyUSB9', join(dev, 'serial', 'by-id', 'usb-gone-if00-port0')); // dangling: unplugged
  for (const n of ['ttyS0', 'ttyS1', 'ttyS2', 'ttyS3']) {
    mkdirSync(join(sys, n), { recursive: true });
    writeFileSync(join(sys, n, 'type'), n === 'ttyS0' ? '4\n' : '0\n'); // 4 = PORT_16550A, 0 = PORT_UNKNOWN
  }
  mkdirSync(join(sys, 'drivers', 'port'), { recursive: true });
  for (const n of ['ttyS0', 'ttyS1']) {
    // ttyS1: a driver is bound but the port type is unknown (phantom on many PCs)
    mkdirSync(join(sys, n, 'device'));
    symlinkSync(join(sys, 'drivers', 'port'), join(sys, n, 'device', 'driver'));
  }
  return { dev, sys };
}

describe('listPorts', () => {
  it('lists USB, ACM and real UARTs with their by-id names, skipping phantom ttyS and dangling links', async () => {
    const { dev, sys } = fakeTree();
    const ports = await listPorts({ dev, sys });
    expect(ports).toEqual([
      { path: join(dev, 'ttyUSB0'), byId: join(dev, 'serial/by-id/usb-FTDI_FT232R_USB_UART_A50285BI-if00-port0'), kind: 'usb' },
      { path: join(dev, 'ttyACM0'), byId: join(dev, 'serial/by-id/usb-Arduino__www.arduino.cc__0043_75833353035351F0E1A1-if00'), kind: 'acm' },
      { path: join(dev, 'ttyS0'), kind: 'serial' },
    ]);
    expect(ports.map(preferredPath)).toEqual([ports[0].byId, ports[1].byId, join(dev, 'ttyS0')]);
  });

  it('sorts numerically and copes with no by-id directory', async () => {
    const dev = join(root, 'dev');
    mkdirSync(dev);
    for (const n of ['ttyUSB10', 'ttyUSB2', 'ttyACM1', 'ttyAMA0']) writeFileSync(join(dev, n), '');
    const ports = await listPorts({ dev, sys: join(root, 'nosys') });
    expect(ports.map((p) => [p.path.slice(dev.length + 1), p.kind])).toEqual([
      ['ttyUSB2', 'usb'], ['ttyUSB10', 'usb'], ['ttyACM1', 'acm'], ['ttyAMA0', 'serial'],
    ]);
  });

  it('resolves a by-id link to a real pseudo-terminal as kind pty', async () => {
    pty = await startPtyPair(root);
    const dev = join(root, 'devtree');
    mkdirSync(join(dev, 'serial', 'by-id'), { recursive: true });
    symlinkSync(pty.devicePath, join(dev, 'serial', 'by-id', 'virtual-balance'));
    const ports = await listPorts({ dev, sys: join(root, 'nosys') });
    expect(ports).toEqual([{ path: realpathSync(pty.devicePath), byId: join(dev, 'serial/by-id/virtual-balance'), kind: 'pty' }]);
    expect(ports[0].path).toMatch(/^\/dev\/pts\/\d+$/);
  });

  it('on this machine, lists ttyS nodes exactly when sysfs shows hardware behind them', async () => {
    const ports = await listPorts();
    const listedS = ports.filter((p) => /\/ttyS\d+$/.test(p.path)).map((p) => p.path).sort();
    const sysDir = '/sys/class/tty';
    const realS = (existsSync(sysDir) ? readdirSync(sysDir) : [])
      .filter((n) => /^ttyS\d+$/.test(n) && existsSync(join('/dev', n)))
      .filter((n) => existsSync(join(sysDir, n, 'device', 'driver')))
      .filter((n) => !existsSync(join(sysDir, n, 'type')) || readFileSync(join(sysDir, n, 'type'), 'utf8').trim() !== '0')
      .map((n) => join('/dev', n))
      .sort();
    expect(listedS).toEqual(realS);
    for (const p of ports) expect(existsSync(p.path)).toBe(true);
  });
});

describe('portKind', () => {
  it('names kinds from device names', () => {
    expect(portKind('/dev/ttyUSB3')).toBe('usb');
    expect(portKind('/dev/ttyACM0')).toBe('acm');
    expect(portKind('/dev/ttyS0')).toBe('serial');
    expect(portKind('/dev/ttyAMA0')).toBe('serial');
    expect(portKind('/dev/pts/4')).toBe('pty');
    expect(portKind('/dev/rfcomm0')).toBe('other');
  });
});
