/**
 * Robustness under random damage (kind: edge cases, seeded fuzzing).
 *
 * 150 copies of the demo releases are damaged at random (tests/fuzz/mutate.ts:
 * cells, rows, headers, bytes, truncation, duplicated lines, swapped columns,
 * release.yaml edits, whole files), each case from its own seeded stream. On
 * every copy `rungbook check` and `rungbook calibrate` run in-process through
 * main() (in worker threads, so that a hang can be stopped), and `rungbook
 * build` runs on a handful. Every command must end with exit 0 (calibrate: a
 * complete, parseable results.json with finite numbers) or exit 1 with a
 * message naming a file of the release or the reason the analysis cannot
 * proceed (and no results.json); never an internal error, an escaped
 * exception, a hang, a non-finite number or a half-written output.
 *
 * `check` is the gate: it refuses exactly the releases `calibrate` refuses, in
 * the same words (the same problem lines for an input error, calibrate's reason
 * for an analysis error), on the random corpus and on one damaged release per
 * rule for which calibrate refuses (tests/fuzz/structure.ts); no output of
 * either command anywhere says "internal error".
 *
 * The table of endings (mutation kind x ending) is printed on stdout.
 *
 * Time limits: a command that runs longer than CASE_LIMIT_MS is a hang. A normal
 * calibration takes about a second; damaged data that keeps the global fit from
 * converging runs it to its iteration cap (600 iterations, about 25 s on a slow
 * core), which is slow but bounded, so the limit is well above that.
 */
import { existsSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { createRng } from '../../src/demo/random.ts';
import { copyDemo, DEMO_IDS, tempDir } from '../trust/releaseCopy.ts';
import { calibrateReason, classify, DEFECTS, type Ended, type Ending, endingTable, issueLines } from './classify.ts';
import { type Mutation, MUTATION_KINDS, mutateRelease } from './mutate.ts';
import { CommandPool, type Outcome } from './pool.ts';
import { STRUCTURE_CASES } from './structure.ts';

const FUZZ_SEED = 20260514;
const CASES = 150;
const CASE_LIMIT_MS = 180_000;
const BUILD_CASES = 3;
const BUILD_LIMIT_MS = 600_000;

interface Case {
  n: number;
  release: string;
  dir: string;
  resultsFile: string;
  mutation: Mutation;
  check?: Ended;
  calibrate?: Ended;
  /** What each command printed on stderr. */
  checkErr?: string;
  calibrateErr?: string;
}

const parent = tempDir('rungbook-fuzz-');
afterAll(() => rmSync(parent, { recursive: true, force: true }));

const cases: Case[] = [];

const stderrOf = (o: Outcome): string => ('timeout' in o ? '' : o.stderr);

/** Run check and calibrate on a case, in the pool. */
async function runBoth(pool: CommandPool, c: Case): Promise<void> {
  const check = await pool.run(['check', c.dir], CASE_LIMIT_MS);
  c.check = classify('check', check, c.dir, null);
  c.checkErr = stderrOf(check);
  const calibrate = await pool.run(['calibrate', c.dir, '--json', c.resultsFile], CASE_LIMIT_MS);
  c.calibrate = classify('calibrate', calibrate, c.dir, c.resultsFile);
  c.calibrateErr = stderrOf(calibrate);
}

/** Run check and calibrate on every case, two worker threads at most. */
async function runAll(list: Case[]): Promise<void> {
  const pool = new CommandPool(Math.max(1, Math.min(2, availableParallelism())));
  try {
    await Promise.all(list.map((c) => runBoth(pool, c)));
  } finally {
    await pool.close();
  }
}

/**
 * Where check is not the gate: a case check and calibrate end differently (one refuses, the other
 * not, or one as an input problem and the other as an analysis problem), or refuse in other words.
 */
function notTheGate(c: Case): string | null {
  const where = `case ${c.n} (${c.mutation.kind}, ${c.mutation.file}: ${c.mutation.description})`;
  if (c.check!.ending !== c.calibrate!.ending) return `${where}: check ${c.check!.ending}, calibrate ${c.calibrate!.ending}\n${c.checkErr}\n${c.calibrateErr}`;
  if (c.check!.ending === 'input error') {
    const a = issueLines(c.checkErr!, c.dir);
    const b = issueLines(c.calibrateErr!, c.dir);
    if (a.length === 0 || a.join('\n') !== b.join('\n')) return `${where}: other problems\ncheck:\n${a.join('\n')}\ncalibrate:\n${b.join('\n')}`;
  }
  if (c.check!.ending === 'analysis error') {
    const reason = calibrateReason(c.calibrateErr!);
    if (reason === null || !c.checkErr!.includes(`rungbook check: ${c.dir}: ${reason}`))
      return `${where}: other words\ncheck: ${c.checkErr}\ncalibrate: ${c.calibrateErr}`;
  }
  return null;
}

function count(rows: Map<string, Map<Ending, number>>, kind: string, e: Ending): void {
  const m = rows.get(kind) ?? new Map<Ending, number>();
  m.set(e, (m.get(e) ?? 0) + 1);
  rows.set(kind, m);
}

describe('fuzz: damaged demo releases', () => {
  it(`check and calibrate end cleanly on ${CASES} damaged releases`, async () => {
    for (let n = 0; n < CASES; n++) {
      const rng = createRng(FUZZ_SEED, 'fuzz-case', String(n));
      const release = DEMO_IDS[rng.int(0, DEMO_IDS.length - 1)]!;
      const caseDir = join(parent, `case-${n}`);
      const dir = copyDemo(release, caseDir);
      const mutation = mutateRelease(dir, MUTATION_KINDS[n % MUTATION_KINDS.length]!, rng);
      cases.push({ n, release, dir, resultsFile: join(caseDir, 'results.json'), mutation });
    }
    await runAll(cases);

    const byCheck = new Map<string, Map<Ending, number>>();
    const byCalibrate = new Map<string, Map<Ending, number>>();
    for (const c of cases) {
      count(byCheck, c.mutation.kind, c.check!.ending);
      count(byCalibrate, c.mutation.kind, c.calibrate!.ending);
    }
    console.log(
      `\n${endingTable(`rungbook check on ${CASES} damaged releases (seed ${FUZZ_SEED})`, MUTATION_KINDS, byCheck)}\n\n` +
        `${endingTable(`rungbook calibrate on the same ${CASES} releases`, MUTATION_KINDS, byCalibrate)}\n`,
    );

    // Every kind of damage was tried about equally often.
    for (const kind of MUTATION_KINDS)
      expect(cases.filter((c) => c.mutation.kind === kind).length).toBeGreaterThanOrEqual(Math.floor(CASES / MUTATION_KINDS.length));
    // No defect of ours, in either command.
    const defects = cases.flatMap((c) =>
      (['check', 'calibrate'] as const)
        .filter((cmd) => (DEFECTS as readonly string[]).includes(c[cmd]!.ending))
        .map(
          (cmd) => `case ${c.n} (${c.release}, ${c.mutation.kind}, ${c.mutation.file}: ${c.mutation.description}): ${cmd} -> ${c[cmd]!.ending}: ${c[cmd]!.why}`,
        ),
    );
    expect(defects).toEqual([]);
    // The two commands agree on the input: a release that check refuses is refused by calibrate as an input problem,
    // and a release that check accepts is never refused by calibrate as an input problem.
    const disagree = cases.filter((c) => (c.check!.ending === 'input error') !== (c.calibrate!.ending === 'input error'));
    expect(disagree.map((c) => `case ${c.n}: ${c.mutation.description}: check ${c.check!.ending}, calibrate ${c.calibrate!.ending}`)).toEqual([]);
    // check is the gate: it refuses exactly what calibrate refuses, in the same words, and nothing says "internal error".
    expect(cases.map(notTheGate).filter((x) => x !== null)).toEqual([]);
    expect(cases.filter((c) => /internal error/.test(`${c.checkErr}${c.calibrateErr}`)).map((c) => c.n)).toEqual([]);
    // The damage is real: most cases are refused, and some still calibrate.
    const refused = cases.filter((c) => c.check!.ending === 'input error').length;
    expect(refused).toBeGreaterThan(CASES / 2);
    expect(cases.some((c) => c.calibrate!.ending === 'ok')).toBe(true);
  }, 3_600_000);

  it(`check refuses what calibrate refuses, in its words: one damaged release per rule (${STRUCTURE_CASES.length})`, async () => {
    const structural: (Case & { expected: (typeof STRUCTURE_CASES)[number] })[] = STRUCTURE_CASES.map((s, i) => {
      const caseDir = join(parent, `rule-${i}`);
      const dir = copyDemo('2026.1', caseDir);
      s.edit(dir);
      return {
        n: CASES + i,
        release: '2026.1',
        dir,
        resultsFile: join(caseDir, 'results.json'),
        mutation: { kind: 'file' as const, file: s.name, description: s.rule },
        expected: s,
      };
    });
    await runAll(structural);
    const rows = new Map<string, Map<Ending, number>>();
    for (const c of structural)
      count(rows, c.expected.ending === 'analysis error' ? 'ladder' : c.expected.ending === 'ok' ? 'ignored file' : 'contract', c.check!.ending);
    console.log(
      `\n${endingTable(`rungbook check on ${structural.length} releases, one per rule (calibrate ends the same way in each)`, [...rows.keys()], rows)}\n`,
    );
    for (const c of structural) {
      const what = `${c.expected.name} (${c.expected.rule})`;
      expect([c.check!.ending, c.calibrate!.ending], `${what}\n${c.checkErr}\n${c.calibrateErr}`).toEqual([c.expected.ending, c.expected.ending]);
      if (c.expected.message) {
        expect(c.checkErr, what).toMatch(c.expected.message);
        expect(c.calibrateErr, what).toMatch(c.expected.message);
      }
      expect(notTheGate(c), what).toBeNull();
      expect(`${c.checkErr}${c.calibrateErr}`, what).not.toMatch(/internal error/);
    }
  }, 600_000);

  it(
    `build ends cleanly on ${BUILD_CASES} damaged releases, with the site complete or absent`,
    async () => {
      expect(cases.length).toBe(CASES);
      // Two that calibrate (a damaged but valid release must still give every page) and one refused.
      const ok = cases.filter((c) => c.calibrate!.ending === 'ok');
      const pickKinds = [...new Set(ok.map((c) => c.mutation.kind))].slice(0, BUILD_CASES - 1);
      const chosen = [...pickKinds.map((k) => ok.find((c) => c.mutation.kind === k)!), cases.find((c) => c.calibrate!.ending === 'input error')!];
      expect(chosen.length).toBe(BUILD_CASES);
      const rows = new Map<string, Map<Ending, number>>();
      for (const c of chosen) {
        const out = join(parent, `dist-${c.n}`);
        const err: string[] = [];
        const io = {
          stdout: () => undefined,
          stderr: (s: string) => void err.push(s),
          workDir: join(parent, `work-${c.n}`),
          cacheDir: join(parent, `cache-${c.n}`),
        };
        let timer: NodeJS.Timeout | undefined;
        const code = await Promise.race([
          main(['build', '--releases', join(parent, `case-${c.n}`), '--out', out], io),
          new Promise<'timeout'>((ok) => (timer = setTimeout(() => ok('timeout'), BUILD_LIMIT_MS))),
        ]);
        clearTimeout(timer);
        const text = err.join('');
        const where = `case ${c.n} (${c.mutation.description})`;
        expect(code, `${where}: ${text}`).not.toBe('timeout');
        expect(text, where).not.toMatch(/internal error/);
        // Nothing half-built is left beside the output folder.
        expect(
          readdirSync(parent).filter((f) => f.startsWith(`.dist-${c.n}.`)),
          where,
        ).toEqual([]);
        if (code === 0) {
          expect(existsSync(join(out, 'index.html')), where).toBe(true);
          const overview = readFileSync(join(out, 'releases', c.release, 'index.html'), 'utf8');
          expect(overview, where).toContain('Internal results for collaboration review');
          expect(overview, where).not.toMatch(/\bNaN\b|Infinity/);
          count(rows, c.mutation.kind, 'ok');
        } else {
          expect(code, where).toBe(1);
          expect(existsSync(out), where).toBe(false);
          // The message names a file of the damaged release (file:line: column ...).
          expect(
            text.split('\n').some((l) => l.startsWith(`${c.dir}/`)),
            `${where}: ${text}`,
          ).toBe(true);
          count(rows, c.mutation.kind, 'input error');
        }
      }
      console.log(`\n${endingTable(`rungbook build on ${BUILD_CASES} damaged releases`, [...rows.keys()], rows)}\n`);
      expect([...rows.values()].reduce((n, m) => n + (m.get('ok') ?? 0), 0)).toBe(BUILD_CASES - 1);
    },
    3 * 600_000,
  );
});
