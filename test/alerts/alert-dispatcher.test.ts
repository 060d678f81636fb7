import { afterEach, describe, expect, it } from 'vitest';
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createDispatcher } from '../../src/alerts/alert-dispatcher.js';
import { formatAlertLine } from '../../src/alerts/stderr-sink.js';
import { alertRecord, type AlertInput } from '../../src/alerts/alert-record.js';
import { parseStation } from '../../src/config/station.js';

const servers: Server[] = [];
afterEach(async () => { await Promise.all(servers.splice(0).map((s) => new Promise<void>((r) => { s.closeAllConnections(); s.close(() => r()); }))); });

const input = (i: number): AlertInput => ({
  run: 12, station: 'bench-a', t: `2026-03-0${i + 1}T10:00:00.000Z`, t_s: 3600 * i, kind: 'equilibrium-drift', severity: 'warning',
  state: 'raised', message: `equilibrium drifting at +1.2${i}e-5 ± 4.00e-8 rad/h`, value: 3.4e-9, threshold: 1.39e-9, host_ms: 123, data: { unit: 'rad/s' },
});

describe('createDispatcher', () => {
  it('fans each alert out to stderr, the webhook and the command as configured by the station file', async () => {
    const posted: unknown[] = [];
    const srv = createServer((req, res) => { let b = ''; req.on('data', (c) => (b += c)); req.on('end', () => { posted.push(JSON.parse(b)); res.end(); }); });
    servers.push(srv);
    await new Promise<void>((r) => srv.listen(0, '127.0.0.1', () => r()));
    const dir = mkdtempSync(join(tmpdir(), 'fw-disp-'));
    const out = join(dir, 'cmd.jsonl');
    const station = parseStation({
      station: 'bench-a', fibre: { name: 'W25' },
      alerts: {
        webhook: { url: `http://127.0.0.1:${(srv.address() as AddressInfo).port}/alerts`, timeout_s: 2 },
        command: { argv: [process.execPath, '-e', "let d='';process.stdin.on('data',c=>d+=c).on('end',()=>require('fs').appendFileSync(process.argv[1],d))", out] },
      },
    });
    const lines: string[] = [];
    const d = createDispatcher(station.alerts, { stderr: { write: (s: string) => lines.push(s) } });
    expect(d.sinks).toEqual(['stderr', 'webhook', 'command']);
    d.dispatch(input(0));
    d.dispatch(input(1));
    const st = await d.close(10_000);
    expect(st).toEqual({ webhook: { delivered: 2, failed: 0, dropped: 0, pending: 0 }, command: { ran: 2, failed: 0, dropped: 0, pending: 0 } });
    const rec0 = alertRecord(input(0));
    expect(rec0).not.toHaveProperty('host_ms');
    expect(lines).toEqual([formatAlertLine(rec0) + '\n', formatAlertLine(alertRecord(input(1))) + '\n']);
    expect(lines[0]).toBe('2026-03-01T10:00:00.000Z alert bench-a run 12 equilibrium-drift raised [warning] equilibrium drifting at +1.20e-5 ± 4.00e-8 rad/h\n');
    expect(posted).toEqual([rec0, alertRecord(input(1))]);
    expect(readFileSync(out, 'utf8').trim().split('\n').map((l) => JSON.parse(l))).toEqual([rec0, alertRecord(input(1))]);
  });

  it('stderr off and no other sink: dispatch is a no-op; delivery errors go to onError, not thrown', async () => {
    const quiet = createDispatcher(parseStation({ station: 's', fibre: { name: 'f' }, alerts: { stderr: false } }).alerts);
    expect(quiet.sinks).toEqual([]);
    quiet.dispatch(input(0));
    expect(await quiet.close()).toEqual({});
    const errs: string[] = [];
    const d = createDispatcher(parseStation({ station: 's', fibre: { name: 'f' }, alerts: { stderr: false, command: { argv: ['/nonexistent/hook'] } } }).alerts, { onError: (m) => errs.push(m) });
    expect(() => d.dispatch(input(0))).not.toThrow();
    await d.close(5000);
    expect(errs[0]).toMatch(/alert command \/nonexistent\/hook: cannot start/);
  });
});
