/**
 * The rungbook command line. Exit codes: 0 success, 1 invalid input or failed check,
 * 2 usage error. Results go to stdout; messages and progress to stderr.
 */
import { InputError, AnalysisError, formatIssue } from '../types/issues.ts';
import { processIO, UsageError, type CliIO } from './output.ts';
import { BlindingError } from '../blinding/errors.ts';
import { ResultsFormatError } from '../io/results.ts';

const USAGE = `rungbook: calibrate the distance ladder from data releases and build the report

usage:
  rungbook check     <release-dir>...                  validate releases (exit 1 on any problem)
  rungbook calibrate <release-dir> [--json FILE] [--workers N]
                                                       run the ladder (variants on N threads), print a summary, write results.json
  rungbook diff      <release-a> <release-b> [--format text|markdown|json]
  rungbook build     [--releases DIR] [--out DIR]      calibrate every release and build the static report
  rungbook publish   <release-dir> [--by NAME] [--date YYYY-MM-DD]
                     freeze the release: record its results, code version and file checksums in published.json
  rungbook blind     <release-dir> [--out DIR] [--id BLINDING_ID] [--key-file FILE] [--date YYYY-MM-DD]
                     hide H0: offset the Hubble-flow magnitudes by a secret amount fixed by the key
                     and the blinding id (default id: main); in place only before the first commit
  rungbook unblind   <release-dir> --by NAME [--key-file FILE] [--date YYYY-MM-DD]
                     check the key against the release's commitment and record the unblinding
  rungbook recover   <release-dir> --seeds N [--first S] [--shard K/M] [--workers W] [--out FILE] [--summary FILE]
  rungbook recover   --merge FILES... [--summary FILE]
                     simulate releases shaped like this one (its own fit as the truth), calibrate each and
                     check the pulls: recovery.json beside the release, one JSON line per seed
  The blinding key comes from --key-file or the environment variable RUNGBOOK_BLINDING_KEY,
  never from the repository.
`;

type Command = (args: string[], io: CliIO) => Promise<number>;

const COMMANDS: Record<string, () => Promise<Command>> = {
  check: async () => {
    const m = await import('./check.ts');
    return (args, io) => {
      if (args.length === 0) throw new UsageError('usage: rungbook check <release-dir>...');
      // runCheck writes one line per call, without its end: add it here.
      const line = (w: (s: string) => void) => (s: string) => w(s.endsWith('\n') ? s : `${s}\n`);
      return m.runCheck(args, { stdout: line(io.stdout), stderr: line(io.stderr) });
    };
  },
  calibrate: async () => (await import('./calibrate.ts')).runCalibrate,
  build: async () => (await import('./build.ts')).runBuild,
  diff: async () => (await import('./diff.ts')).runDiff,
  blind: async () => (await import('./blind.ts')).runBlind,
  unblind: async () => (await import('./blind.ts')).runUnblind,
  publish: async () => (await import('./publish.ts')).runPublish,
  recover: async () => (await import('./recover.ts')).runRecover,
};

export async function main(argv: string[], io: CliIO = processIO): Promise<number> {
  const [name, ...args] = argv;
  if (!name || name === '--help' || name === '-h' || name === 'help') {
    io.stdout(USAGE);
    return name ? 0 : 2;
  }
  const load = COMMANDS[name];
  if (!load) {
    io.stderr(`rungbook: unknown command "${name}"\n\n${USAGE}`);
    return 2;
  }
  try {
    const command = await load();
    return await command(args, io);
  } catch (e) {
    if (e instanceof UsageError) {
      io.stderr(`rungbook ${name}: ${e.message}\n`);
      return 2;
    }
    if (e instanceof InputError) {
      for (const issue of e.issues) io.stderr(`${formatIssue(issue)}\n`);
      if (e.omitted > 0) io.stderr(`... and ${e.omitted} more problems\n`);
      io.stderr(`rungbook ${name}: ${e.issues.length + e.omitted} input problem(s); nothing was written\n`);
      return 1;
    }
    if (e instanceof BlindingError) {
      io.stderr(`rungbook ${name}: ${e.message}\n${e.hint ? `  hint: ${e.hint}\n` : ''}`);
      return 1;
    }
    if (e instanceof AnalysisError) {
      io.stderr(`rungbook ${name}: ${e.message}\n${e.hint ? `  hint: ${e.hint}\n` : ''}`);
      return 1;
    }
    if (e instanceof ResultsFormatError) {
      io.stderr(`rungbook ${name}: ${e.message}\n`);
      return 1;
    }
    // Anything else is a defect of ours, not of the input: say so plainly, never a bare stack dump.
    const err = e as Error;
    io.stderr(
      `rungbook ${name}: internal error (${err?.name ?? 'Error'}: ${err?.message ?? String(e)}); nothing was written.\n` +
        `  Please report it with the command and the release that caused it.\n`,
    );
    if (process.env.RUNGBOOK_DEBUG) io.stderr(`${err?.stack ?? ''}\n`);
    return 1;
  }
}
