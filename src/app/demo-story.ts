/**
 * The demo's embedded default: an invented balance and its scripted story,
 * scaled to the requested length. A 25 µm tungsten fibre with a ~60 s period
 * settles after loading (equilibrium creep that dies away), the room warms
 * and cools, a loose heat shield touches the pendulum for a while (a period
 * step that later goes away), and a late knock restarts the creep.
 */
export interface DemoStory {
  scenario: Record<string, unknown>;
  station: Record<string, unknown>;
  /** simulated seconds */
  duration_s: number;
}

/** The scenario (for the simulator) and the station (for the recorder) of the demo. */
export function demoStory(hours: number): DemoStory {
  const D = Math.round(hours * 3600);
  const at = (f: number) => Math.round(f * D);
  const fibre = { name: 'W25-demo-07', material: 'tungsten', diameter_m: 2.5e-5, length_m: 0.4 };
  // κ = πGd⁴/(32L) ≈ 1.5e-8 N·m/rad with G = 161 GPa; I chosen for a ~60 s period
  const inertia = 1.4e-6;
  const scenario = {
    name: 'demo-settling-bench',
    description: 'Invented demo story: settling creep, a room-temperature swing, a period step from a touching shield that later clears, and a late knock.',
    duration_s: D,
    sample_rate_Hz: 10,
    inertia_kg_m2: inertia,
    fibre: { name: fibre.name, material: fibre.material, diameter_m: fibre.diameter_m, length_m: fibre.length_m },
    q: 2500,
    damping: 'internal',
    temperature_K: 295.15,
    thermal_noise: true,
    angle_noise_rad: 2e-7,
    initial: { amplitude_rad: 0.004, phase_rad: 0, equilibrium_rad: 0 },
    sensor: { kind: 'angle' },
    temperature_swing: { amplitude_K: 0.4, period_s: 86400, phase_rad: 0 },
    creep: { a_rad: 4e-5, tc_s: 1200, start_s: 0 },
    period_steps: [{ t_s: at(0.4), ppm: 600 }, { t_s: at(0.62), ppm: -600 }],
    disturbances: [{ t_s: at(0.8), kick_rad: 0.002, creep: { a_rad: 3e-5, tc_s: 900 } }],
    temperature_channel: { noise_K: 0.003 },
    output: { format: 'lines', columns: ['t_s', 'angle_rad', 'temp_C'] },
  };
  const station = {
    station: 'demo-bench',
    fibre,
    pendulum: { inertia_kg_m2: inertia, mass_kg: 0.004 },
    input: { baud: 115200, format: 'lines', columns: ['t_s', 'angle_rad', 'temp_C'] },
    sensor: { kind: 'angle' },
    analysis: { window_periods: 4, step_periods: 1 },
    alerts: { equilibrium_rate_rad_per_hour: 2e-5, period_change_ppm: 300, no_data_s: 20, horizon_h: Math.min(6, hours / 4) },
  };
  return { scenario, station, duration_s: D };
}
