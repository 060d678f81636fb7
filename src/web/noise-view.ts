/// <reference lib="dom" />
/**
 * The noise budget (`noise --json`): the torque noise against the thermal
 * floor of the stated damping, the angle noise against the readout floor, and
 * the Allan deviations of the windows' equilibria and fractional periods —
 * log–log charts, and the figures that go with them.
 */
import type { NoiseBudget } from '../summaries/noise-budget.js';
import { duration, fmt } from '../display/format.js';
import { Chart } from './charts.js';
import { el, facts, put, section } from './dom.js';

/** Draw the budget into `box`. */
export function noiseView(box: HTMLElement, b: NoiseBudget): void {
  const f = b.frequency_Hz;
  box.appendChild(facts([
    ['span', b.from_s !== null && b.to_s !== null ? `${fmt(b.from_s)} s … ${fmt(b.to_s)} s since the start (${duration(b.to_s - b.from_s)})` : '—'],
    ['damping, temperature', `${b.damping}; ${b.temperature_K.toFixed(2)} K${b.temperature_assumed ? ' (assumed: no temp_C and no environment.temperature_K)' : ''}`],
    ['resonance, Q, κ', `${fmt(b.resonance_Hz)} Hz; Q ${fmt(b.q)}; κ ${fmt(b.kappa_Nm_per_rad)} N·m/rad`],
    ['readout floor', `${fmt(b.readout_asd_rad_per_rtHz)} rad/√Hz`],
    ['thermal band', b.band_Hz ? `${fmt(b.band_Hz[0])} … ${fmt(b.band_Hz[1])} Hz (where the thermal noise stands above the readout)` : 'none: the thermal noise never stands above the readout floor'],
    ['excess over thermal', b.excess_over_thermal !== null ? `${fmt(b.excess_over_thermal, 3)} (median of measured over thermal torque ASD in the band; 1 = at the thermal limit)` : '—'],
  ]));
  const shade = () => b.band_Hz;
  const spectra = put(box, section('Spectra (one-sided amplitude spectral densities)', 'block charts')).lastChild as HTMLElement;
  if (!f.length) spectra.appendChild(el('p', 'note', 'no stretch long enough for a spectrum'));
  else {
    if (b.torque_asd_Nm_per_rtHz) {
      new Chart(spectra, {
        name: 'torque-asd', title: 'torque noise against the thermal floor', x: 'log', xLabel: 'frequency (Hz)', yLog: true, shade,
        yLabels: { y: 'N·m/√Hz' },
        series: [{ label: 'measured torque', color: '#2b4c6f', unit: 'N·m/√Hz' }, { label: `thermal (${b.damping})`, color: '#b3261e', unit: 'N·m/√Hz', dash: [5, 4] }],
      }, { x: f, y: [b.torque_asd_Nm_per_rtHz, b.thermal_torque_asd_Nm_per_rtHz ?? f.map(() => null)] });
    } else spectra.appendChild(el('p', 'note', 'no torque spectrum: the station file gives no inertia (pendulum.inertia_kg_m2 or pendulum.parts)'));
    new Chart(spectra, {
      name: 'angle-asd', title: 'angle noise (fitted swing removed) against the readout floor', x: 'log', xLabel: 'frequency (Hz)', yLog: true, shade,
      yLabels: { y: 'rad/√Hz' },
      series: [{ label: 'angle', color: '#3b7a57', unit: 'rad/√Hz' }, { label: 'readout floor', color: '#7d7d7d', unit: 'rad/√Hz', dash: [5, 4] }],
    }, { x: f, y: [b.angle_asd_rad_per_rtHz, f.map(() => b.readout_asd_rad_per_rtHz)] });
  }
  const allan = put(box, section('Allan deviation of the windows (overlapping)', 'block charts')).lastChild as HTMLElement;
  const eq = b.allan.equilibrium, per = b.allan.period;
  if (eq.tau_s.length) {
    new Chart(allan, {
      name: 'allan-equilibrium', title: 'equilibrium', x: 'log', xLabel: 'τ (s)', yLog: true, yLabels: { y: 'rad' },
      series: [{ label: 'equilibrium', color: '#3b7a57', unit: 'rad', style: 'both' }],
    }, { x: eq.tau_s, y: [eq.adev_rad] });
  }
  if (per.tau_s.length) {
    new Chart(allan, {
      name: 'allan-period', title: 'fractional period', x: 'log', xLabel: 'τ (s)', yLog: true, yLabels: { y: 'fraction' },
      series: [{ label: 'period', color: '#b5651d', style: 'both' }],
    }, { x: per.tau_s, y: [per.adev] });
  }
  if (!eq.tau_s.length && !per.tau_s.length) allan.appendChild(el('p', 'note', 'too few windows for an Allan deviation'));
}
