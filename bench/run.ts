/**
 * `npm run bench`: every benchmark in turn, printing its figures, then one
 * summary table. Figures are measured on this machine each time; nothing is
 * hard-coded. Pass names to run a subset: `npm run bench -- fit store`.
 */
type Bench = { name: string; load: () => Promise<() => Promise<object>> };

const BENCHES: Bench[] = [
  { name: 'decode', load: async () => (await import('./decode.js')).benchDecode },
  { name: 'store', load: async () => (await import('./store.js')).benchStore },
  { name: 'ingest', load: async () => (await import('./ingest.js')).benchIngest },
  { name: 'fit', load: async () => (await import('./fit.js')).benchFit },
  { name: 'condition', load: async () => (await import('./condition.js')).benchCondition },
  { name: 'import', load: async () => (await import('./import.js')).benchImport },
  { name: 'watch', load: async () => (await import('./watch.js')).benchWatch },
];

async function main(): Promise<void> {
  const want = process.argv.slice(2);
  const all: [string, string, number][] = [];
  for (const b of BENCHES) {
    if (want.length && !want.includes(b.name)) continue;
    process.stdout.write(`\n=== ${b.name} ===\n`);
    try {
      const figures = await (await b.load())();
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
