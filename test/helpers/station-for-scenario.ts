/**
 * The station file that matches a scenario: what the acquisition side needs
 * to read the simulator's wire output (format, columns or channels, sensor
 * calibration) and to turn periods into κ and G (inertia, fibre).
 */
import { parseStation, type Station } from '../../src/config/station.js';
import { periodFromKappa } from '../../src/physics/torsion.js';
import type { Scenario } from '../../drivers/simulator/scenario.js';
import { framesChannels, linesColumns } from '../../drivers/simulator/run-simulator.js';

/** Options of stationForScenario. */
export interface StationForScenarioOptions {
  /** station name (default "sim-" + scenario name) */
  name?: string;
  /** serial device path to record from (default: none) */
  device?: string;
  /** wire format the simulator is run with (default the scenario's) */
  format?: 'lines' | 'frames';
}

const drop = <T extends Record<string, unknown>>(o: T): T => Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as T;

/** A validated Station describing the virtual balance of `sc` as a real station would. */
export function stationForScenario(sc: Scenario, opts: StationForScenarioOptions = {}): Station {
  const format = opts.format ?? sc.output.format;
  const s = sc.sensor;
  const sensor =
    s.kind === 'angle' ? { kind: 'angle' }
    : s.kind === 'encoder' ? drop({ kind: 'encoder', counts_per_rev: s.counts_per_rev, counter_bits: s.counter_bits })
    : s.kind === 'split-photodiode' ? { kind: 'split-photodiode', lever_arm_m: s.lever_arm_m, beam_radius_m: s.beam_radius_m }
    : { kind: 'psd', lever_arm_m: s.lever_arm_m, half_length_m: s.half_length_m };
  // the layout runSimulator writes in that format
  const input: Record<string, unknown> = format === 'lines' ? { format, columns: linesColumns(sc) } : { format, channels: framesChannels(sc) };
  if (opts.device) input.device = opts.device;
  const f = sc.fibre;
  return parseStation({
    station: opts.name ?? `sim-${sc.name}`,
    fibre: drop({
      name: f?.name ?? `${sc.name}-fibre`,
      material: f?.material,
      diameter_m: f?.diameter_m,
      length_m: f?.length_m,
      width_m: f?.width_m,
      thickness_m: f?.thickness_m,
      shear_modulus_Pa: f?.shear_modulus_Pa,
    }),
    pendulum: { inertia_kg_m2: sc.I },
    input,
    sensor,
    analysis: { period_guess_s: periodFromKappa(sc.I, sc.kappa) },
  }, `station for scenario ${sc.name}`);
}
