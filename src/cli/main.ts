/**
 * The `fibrewatch` command line (docs/commands.md fixes the commands, flags and JSON
 * fields). Each command's work lives in src/cli/commands/<name>.ts and is loaded
 * only when that command runs, so a quick query starts fast.
 */
import { Command, CommanderError, Option } from 'commander';
import { ConfigError } from '../config/config-file.js';
import { RuntimeError, UsageError } from '../domain/errors.js';
import { safeText } from '../display/safe-text.js';

const dbOption = () =>
  new Option('--db <path>', 'SQLite store, or for reading commands the lab archive\'s postgres:// URL (default $FIBREWATCH_DB, else ./fibrewatch.db)');

function positiveNumber(flag: string) {
  return (v: string) => {
    const x = Number(v);
    if (!Number.isFinite(x) || x <= 0) throw new UsageError(`${flag}: must be a number > 0 (got "${v}")`);
    return x;
  };
}

function integerArg(flag: string) {
  return (v: string) => {
    const x = Number(v);
    if (!Number.isInteger(x)) throw new UsageError(`${flag}: must be an integer (got "${v}")`);
    return x;
  };
}

function runArg(v: string): number {
  const x = Number(v);
  if (!Number.isInteger(x) || x <= 0) throw new UsageError(`RUN: must be a run number (got "${v}")`);
  return x;
}

type Action = (...args: any[]) => Promise<void> | void;
const lazy = (mod: string, fn: string): Action => async (...args: unknown[]) => {
  const m = await import(`./commands/${mod}.js`);
  await m[fn](...args);
};

/** Build the program (exported for tests of the usage surface). */
export function buildProgram(): Command {
  const p = new Command('fibrewatch')
    .description('Acquisition, analysis and drift watch for torsion balances')
    .version(process.env.npm_package_version ?? '0.1.0')
    .showHelpAfterError('(run with --help for usage)')
    // set before the subcommands exist, so they inherit it: usage errors exit 2 (docs/commands.md), not commander's 1
    .exitOverride()
    .configureOutput({ writeErr: (s) => process.stderr.write(s) });

  p.command('demo')
    .description('run a virtual balance with a scripted story through the real acquisition path into a fresh store')
    .option('--out <dir>', 'output folder', './fibrewatch-demo')
    .option('--hours <h>', 'simulated hours', positiveNumber('--hours'), 12)
    .option('--in-process', 'skip the pseudo-terminal and feed the decoder in-process')
    .option('--seed <n>', 'random seed', integerArg('--seed'), 7)
    .action(lazy('demo', 'demoCommand'));

  p.command('fit')
    .description('fit each recording as one window (no store)')
    .argument('<file...>', 'recorded files (the bytes of the line)')
    .option('--station <file>', 'station file (sensor, format, inertia, fibre)')
    .option('--columns <list>', 'column roles for a lines file without a station, e.g. t_s,angle_rad')
    .option('--json', 'JSON Lines on stdout, one object per file')
    .action(lazy('fit', 'fitCommand'));

  p.command('record')
    .description('acquire from the station\'s serial device until SIGINT, SIGTERM or SIGHUP, analysing live')
    .requiredOption('--station <file>', 'station file')
    .addOption(dbOption())
    .option('--device <path>', 'override input.device')
    .option('--wait-for-device', 'if the device is missing at start, keep retrying instead of exiting')
    .option('--archive <url>', 'also push the store to this lab archive (postgres://…) continuously, in the background')
    .action(lazy('record', 'recordCommand'));

  p.command('import')
    .description('feed a recorded file through the same pipeline as a new run')
    .argument('<file>', 'recorded file')
    .requiredOption('--station <file>', 'station file')
    .option('--started-at <iso>', 'UTC time of the first sample (default: now minus the duration)')
    .addOption(dbOption())
    .option('--json', 'print the run summary as JSON')
    .action(lazy('import', 'importCommand'));

  p.command('simulate')
    .description('the virtual balance: write the wire format to a device path or stdout')
    .requiredOption('--scenario <file>', 'scenario JSON (see drivers/simulator/scenarios)')
    .requiredOption('--device <path>', 'device path (one end of a pty pair) or - for stdout')
    .addOption(new Option('--format <f>', 'wire format').choices(['lines', 'frames']))
    .option('--speed <x>', 'times faster than real time (0 = as fast as possible)', (v) => {
      const x = Number(v);
      if (!Number.isFinite(x) || x < 0) throw new UsageError(`--speed: must be a number ≥ 0 (got "${v}")`);
      return x;
    }, 1)
    .option('--seed <n>', 'random seed', integerArg('--seed'), 1)
    .option('--duration <s>', 'simulated seconds', positiveNumber('--duration'))
    .action(lazy('simulate', 'simulateCommand'));

  p.command('runs')
    .description('list past runs')
    .option('--fibre <name>').option('--station <name>')
    .option('--since <date>', 'YYYY-MM-DD or ISO 8601, inclusive')
    .option('--until <date>', 'YYYY-MM-DD or ISO 8601, exclusive')
    .addOption(dbOption())
    .option('--json', 'JSON array')
    .action(lazy('runs', 'runsCommand'));

  // a command that reads one run of the store
  const onRun = (name: string, description: string) =>
    p.command(name).description(description).argument('<run>', 'run number', runArg).addOption(dbOption());

  onRun('show', 'one run\'s summary')
    .option('--json')
    .action(lazy('show', 'showCommand'));

  onRun('windows', 'per-window fit results of a run')
    .option('--json', 'JSON array').option('--csv', 'CSV')
    .action(lazy('windows', 'windowsCommand'));

  onRun('events', 'alerts and incidents of a run')
    .option('--json', 'JSON array')
    .action(lazy('events', 'eventsCommand'));

  spanOptions(onRun('noise', 'the balance\'s noise, torque-referred, against its thermal limit; Allan deviations of equilibrium and period'), '', 'the span')
    .option('--json', 'one JSON object')
    .action(lazy('noise', 'noiseCommand'));

  spanOptions(onRun('compare', 'each configuration of a run (state channel, marks) against the others: Δθ, torque, Δperiod, with one drift model'), '', 'the span compared')
    .option('--settle-periods <n>', 'leave out windows starting less than this many periods after a change (default 3)')
    .option('--json', 'one JSON object')
    .action(lazy('compare', 'compareCommand'));

  p.command('mark')
    .description('note a configuration change of a run (during or after it) as a mark event')
    .argument('<run>', 'run number', runArg)
    .argument('<label>', 'the configuration from here on, e.g. "near"')
    .option('--at <iso>', 'when the change was made (default now): YYYY-MM-DD or ISO 8601')
    .addOption(dbOption())
    .option('--json', 'print the stored mark as JSON')
    .action(lazy('mark', 'markCommand'));

  p.command('fibres')
    .description('fibres known to the store')
    .addOption(dbOption())
    .option('--json')
    .action(lazy('fibres', 'fibresCommand'));

  p.command('fibre')
    .description('one fibre\'s history across its runs')
    .argument('<name>')
    .addOption(dbOption())
    .option('--json')
    .action(lazy('fibres', 'fibreCommand'));

  onRun('export', 'data out for other tools')
    .addOption(new Option('--what <what>').choices(['samples', 'windows', 'events']).makeOptionMandatory())
    .addOption(new Option('--format <f>').choices(['csv', 'json']).default('csv'))
    .option('--out <file>', 'write here instead of stdout')
    .action(lazy('export', 'exportCommand'));

  spanOptions(onRun('report', 'a self-contained HTML report with plots'), 'compare-', 'the span of the configurations\' comparison (as compare --from-s --to-s)')
    .requiredOption('--out <file>', 'HTML file to write')
    .action(lazy('report', 'reportCommand'));

  p.command('serve')
    .description('a read-only web dashboard and JSON API over the store, live while record writes it (loopback unless given a token)')
    .addOption(dbOption())
    .option('--host <address>', 'address to listen on; anything but loopback needs a token', '127.0.0.1')
    .option('--port <n>', 'port (0: any free one)', (v: string) => {
      const x = Number(v);
      if (!/^\d+$/.test(v) || x > 65535) throw new UsageError(`--port: must be a whole number from 0 to 65535 (got "${v}")`);
      return x;
    }, 8177)
    .option('--token <t>', 'token every request must carry (default $FIBREWATCH_TOKEN); required beyond loopback')
    .action(lazy('serve', 'serveCommand'));

  p.command('check')
    .description('verify a store: SQLite\'s integrity check and every sample chunk\'s checksum (exit 1 when anything is wrong)')
    .argument('[run]', 'check only this run\'s samples', runArg)
    .addOption(dbOption())
    .option('--mark', 'also store a corrupt-chunk event in each run with a bad chunk (needs write access)')
    .option('--json', 'the findings as one JSON object')
    .action(lazy('check', 'checkCommand'));

  p.command('sync')
    .description('push a station\'s store into the lab archive on PostgreSQL (idempotent, resumable; docs/archive.md)')
    .addOption(dbOption())
    .option('--to <url>', 'the archive, postgres://USER@HOST/DATABASE (default $FIBREWATCH_ARCHIVE)')
    .option('--watch', 'keep pushing as the store grows, through archive outages, until SIGINT, SIGTERM or SIGHUP')
    .option('--init', 'only create or upgrade the archive\'s tables (as the archive\'s owner); no store needed')
    .option('--batch-mb <mb>', 'sample data per transaction, MB (each one a step a cut-off sync resumes from)', positiveNumber('--batch-mb'), 16)
    .option('--json', 'what was pushed, as one JSON object (without --watch)')
    .action(lazy('sync', 'syncCommand'));

  p.command('ports')
    .description('serial devices on this machine (prefer the /dev/serial/by-id paths)')
    .option('--json')
    .action(lazy('ports', 'portsCommand'));

  return p;
}

/** Run the CLI; maps errors to docs/commands.md's exit statuses. */
export async function main(argv: string[]): Promise<void> {
  // output piped into `head` and closed early is not an error
  process.stdout.on('error', (e: NodeJS.ErrnoException) => {
    if (e.code === 'EPIPE') process.exit(0);
    throw e;
  });
  const program = buildProgram();
  try {
    await program.parseAsync(argv);
  } catch (e) {
    process.exitCode = await exitFor(e);
  }
  // benchmarks read the command's own peak memory from here
  if (process.env.FIBREWATCH_REPORT_RSS) process.stderr.write(`maxRSS_bytes=${process.resourceUsage().maxRSS * 1024}\n`);
}

async function exitFor(e: unknown): Promise<number> {
  if (e instanceof CommanderError) {
    if (e.code === 'commander.helpDisplayed' || e.code === 'commander.version' || e.code === 'commander.help') return 0;
    return 2; // commander already printed the message
  }
  // an SQLite fault anywhere in a command's work is a fault of the store: one line naming it
  // (src/cli/store.ts is loaded only then, so commands without a store start without SQLite)
  const code = (e as { code?: unknown })?.code;
  const f = (typeof code === 'string' && code.startsWith('SQLITE_') ? (await import('./store.js')).storeFault(e) : undefined) ?? e;
  if (f instanceof UsageError || f instanceof ConfigError) {
    process.stderr.write(`fibrewatch: ${safeText(f.message)}\n`);
    return 2;
  }
  if (f instanceof RuntimeError) {
    process.stderr.write(`fibrewatch: ${safeText(f.message)}\n`);
    return 1;
  }
  // a fault of the program itself: one line, the stack when asked for (docs/commands.md, "Environment")
  const err = f as Error;
  if (process.env.FIBREWATCH_DEBUG) process.stderr.write(`fibrewatch: ${err?.stack ?? err}\n`);
  else process.stderr.write(`fibrewatch: internal error: ${safeText(err instanceof Error ? `${err.name}: ${err.message}` : String(err))} (FIBREWATCH_DEBUG=1 shows where)\n`);
  return 1;
}

/** `--PREFIXfrom-s` and `--PREFIXto-s`: a span of a run in seconds since its start (checked by src/cli/span-args.ts). */
function spanOptions(cmd: Command, prefix: string, what: string): Command {
  return cmd
    .option(`--${prefix}from-s <s>`, `start of ${what}, s since the run's start`)
    .option(`--${prefix}to-s <s>`, `end of ${what} (exclusive), s since the run's start`);
}
