/**
 * The window results a chart draws, as columns: only windows with status ok,
 * only the fields plotted. The dashboard makes them from `windows --json`
 * rows; the report inlines them (a week has ten thousand windows, so the
 * report keeps just these).
 */

/** Columns of the ok windows, in index order. */
export interface WindowColumns {
  index: number[];
  t_mid_s: number[];
  period_s: (number | null)[];
  period_sigma_s: (number | null)[];
  equilibrium_rad: (number | null)[];
  equilibrium_sigma_rad: (number | null)[];
  drift_rad_per_s: (number | null)[];
  amplitude_rad: (number | null)[];
  amplitude_sigma_rad: (number | null)[];
  q: (number | null)[];
  temp_C: (number | null)[];
}

/** The fields kept, in the order of WindowColumns. */
const WINDOW_COLUMN_FIELDS = [
  'index', 't_mid_s', 'period_s', 'period_sigma_s', 'equilibrium_rad', 'equilibrium_sigma_rad', 'drift_rad_per_s',
  'amplitude_rad', 'amplitude_sigma_rad', 'q', 'temp_C',
] as const satisfies readonly (keyof WindowColumns)[];

/** A window as far as the columns need it (a stored WindowResult or a `windows --json` row). */
type WindowLike = { status: string } & Partial<Record<(typeof WINDOW_COLUMN_FIELDS)[number], number | null>>;

/** Empty columns. */
export function emptyColumns(): WindowColumns {
  return Object.fromEntries(WINDOW_COLUMN_FIELDS.map((f) => [f, []])) as unknown as WindowColumns;
}

/** Append the ok windows of `ws` (in order) to `into` (new columns by default). */
export function windowColumns(ws: readonly WindowLike[], into: WindowColumns = emptyColumns(), round?: (field: string, v: number) => number): WindowColumns {
  for (const w of ws) {
    if (w.status !== 'ok') continue;
    for (const f of WINDOW_COLUMN_FIELDS) {
      const v = w[f];
      const x = typeof v === 'number' && Number.isFinite(v) ? (round ? round(f, v) : v) : null;
      (into[f] as (number | null)[]).push(x);
    }
  }
  return into;
}
