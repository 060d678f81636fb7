/**
 * The demo's embedded default: an invented balance and its scripted story,
 * scaled to the requested length. A 25 µm tungsten fibre with a ~60 s period
 * settles after loading (equilibrium creep that dies away) while the room
 * warms and cools; a loose heat shield touches the pendulum for a while (a
 * period step that later goes away); a knock restarts the creep. In the second
 * half a pair of source masses is moved between two positions every half hour
 * (`state` 1 and 2: a small torque and a small gravity-gradient change of the
 * period, for `compare` to measure over that half), and the fibre is a little
 * anelastic: its period grows with the swing.
 */
export interface DemoStory {
  scenario: Record<string, unknown>;
  station: Record<string, unknown>;
  /** simulated seconds */
  duration_s: number;
  /** where the source masses start moving, s: the demo compares their positions from there on */
  switching_from_s: number;
}

/** The scenario (for the simulator) and the station (for the recorder) of the demo. */
export function demoStory(hours: number): DemoStory {
  const D = Math.round(hours * 3600);
  const at = (f: number) => Math.round(f * D);
  const fibre = { name: 'W25-demo-07', material: 'tungsten', diameter_m: 2.5e-5, length_m: 0.4 };
  // κ = πGd⁴/(32L) ≈ 1.5e-8 N·m/rad with G = 161 GPa; I chosen for a ~60 s period
  const inertia = 1.4e-6;
  const kappa = (Math.PI * 161e9 * fibre.diameter_m ** 4) / (32 * fibre.length_m);
  // the source masses: 5 µrad of deflection (about 10× the thermal angle noise) and +25 ppm of period in position 2,
  // moved every half hour (every D/24, at least 10 min, for other lengths) from half way through
  const deflection_rad = 5e-6;
  const every = Math.max(600, Math.round(D / 24));
  const schedule: { t_s: number; state: number }[] = [];
  for (let k = 0, t = at(0.5); t < D; k++, t += every) schedule.push({ t_s: t, state: k % 2 === 0 ? 2 : 1 });
  const scenario = {
    name: 'demo-settling-bench',
    description: 'Invented demo story: settling creep, a room-temperature swing, a period step from a touching shield that later clears, a knock, source masses moved between two positions every half hour in the second half, a slightly anelastic fibre.',
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
    period_steps: [{ t_s: at(0.22), ppm: 600 }, { t_s: at(0.38), ppm: -600 }],
    // a knock larger than the swing, so the amplitude rises whatever its phase (a fall could not be told from decay)
    disturbances: [{ t_s: at(0.42), kick_rad: 0.008, creep: { a_rad: 3e-5, tc_s: 900 } }],
    temperature_channel: { noise_K: 0.003 },
    configurations: { states: [{ state: 1 }, { state: 2, torque_Nm: deflection_rad * kappa, period_ppm: 25 }], schedule },
    anelastic: { period_amplitude_slope_s_per_rad: 1 },
    output: { format: 'lines', columns: ['t_s', 'angle_rad', 'temp_C', 'state'] },
  };
  const station = {
    station: 'demo-bench',
    fibre,
    pendulum: { inertia_kg_m2: inertia, mass_kg: 0.004 },
    input: { baud: 115200, format: 'lines', columns: ['t_s', 'angle_rad', 'temp_C', 'state'] },
    sensor: { kind: 'angle' },
    analysis: { window_periods: 4, step_periods: 1 },
    alerts: { equilibrium_rate_rad_per_hour: 2e-5, period_change_ppm: 300, no_data_s: 20, horizon_h: Math.min(6, hours / 4) },
  };
  // the comparison starts one switching interval before the first move, so it holds position 1 first
  return { scenario, station, duration_s: D, switching_from_s: Math.max(0, at(0.5) - every) };
}
