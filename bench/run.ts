/**
 * `npm run bench`: every benchmark in turn, printing its figures, then one
 * summary table. Figures are measured on this machine each time; nothing is
 * hard-coded. Pass names to run a subset: `npm run bench -- fit store`.
 */
type Bench = { name: string; file: string; fn: string };

// loaded by name at run time, so one bench file being edited never breaks the build of the others
const BENCHES: Bench[] = [
  { name: 'decode', file: './decode.js', fn: 'benchDecode' },
  { name: 'store', file: './store.js', fn: 'benchStore' },
  { name: 'ingest', file: './ingest.js', fn: 'benchIngest' },
  { name: 'fit', file: './fit.js', fn: 'benchFit' },
  { name: 'condition', file: './condition.js', fn: 'benchCondition' },
  { name: 'import', file: './import.js', fn: 'benchImport' },
  { name: 'watch', file: './watch.js', fn: 'benchWatch' },
  { name: 'replug', file: './replug.js', fn: 'benchReplug' },
  { name: 'soak', file: './soak.js', fn: 'benchSoak' },
  { name: 'noise', file: './noise.js', fn: 'benchNoise' },
  { name: 'sigma', file: './sigma-map.js', fn: 'benchSigmaMap' },
  { name: 'compare', file: './compare.js', fn: 'benchCompare' },
  { name: 'serve', file: './serve.js', fn: 'benchServe' },
  { name: 'sync', file: './sync.js', fn: 'benchSync' },
  { name: 'archive-query', file: './archive-query.js', fn: 'benchArchiveQuery' },
];

async function main(): Promise<void> {
  const want = process.argv.slice(2);
  const all: [string, string, number][] = [];
  for (const b of BENCHES) {
    if (want.length && !want.includes(b.name)) continue;
    process.stdout.write(`\n=== ${b.name} ===\n`);
    try {
      const mod = (await import(b.file)) as Record<string, () => Promise<object>>;
      const figures = await mod[b.fn]();
      for (const [k, v] of Object.entries(figures)) if (typeof v === 'number') all.push([b.name, k, v]);
    } catch (e) {
      process.stdout.write(`bench ${b.name} failed: ${(e as Error).stack ?? e}\n`);
      process.exitCode = 1;
    }
  }
  process.stdout.write('\n=== summary ===\n');
  for (const [b, k, v] of all) process.stdout.write(`${b.padEnd(10)} ${k.padEnd(48)} ${Number(v.toPrecision(4))}\n`);
}

main();
