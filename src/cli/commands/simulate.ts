/** `fibrewatch simulate --scenario F --device PATH|-`: the virtual balance on a device path or stdout. */
import { loadScenario } from '../../../drivers/simulator/scenario.js';
import { runSimulator } from '../../../drivers/simulator/run-simulator.js';
import { abortOnSignals } from '../../../drivers/simulator/abort-on-signals.js';

export async function simulateCommand(opts: { scenario: string; device: string; format?: 'lines' | 'frames'; speed: number; seed: number; duration?: number }): Promise<void> {
  // a bad scenario file is a ConfigError: exit 2 naming the field
  const scenario = loadScenario(opts.scenario);
  const stop = abortOnSignals();
  const toStdout = opts.device === '-';
  const started = Date.now();
  let lastLog = 0;
  try {
    const r = await runSimulator({
      scenario, out: opts.device, format: opts.format, speed: opts.speed, seed: opts.seed, duration_s: opts.duration, signal: stop.signal,
      onProgress: (p) => {
        // progress on stderr, at most every 2 s, and only where a person is watching
        if (!process.stderr.isTTY || Date.now() - lastLog < 2000) return;
        lastLog = Date.now();
        process.stderr.write(`simulate: ${p.t_s.toFixed(0)} s simulated, ${p.samples}/${p.total_samples} samples\r`);
      },
    });
    if (!toStdout || process.stderr.isTTY) {
      process.stderr.write(`simulate: wrote ${r.samples} samples (${r.bytes} bytes) in ${((Date.now() - started) / 1000).toFixed(1)} s${stop.signal.aborted ? ' (stopped)' : ''}\n`);
    }
  } finally {
    stop.dispose();
  }
}
