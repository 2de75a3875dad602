/**
 * One comparison vocabulary (src/diff/vocabulary.ts): the command line's text and message
 * (src/diff/render.ts) and the comparison page (src/report/compare/view.ts) state the same
 * headline on H0 (the same values, shift, sigma of the difference and shift in sigma), the
 * same sigma wording (up to the typography: "sigma" or "σ", "-" or "−") and the same ranking
 * of the input changes. Kind: agreement between outputs, on a real comparison of the demo
 * releases 2026.2 -> 2026.3 and on variations of it (a negative shift, a shift without
 * spread, a table whose columns changed), with every number checked against the report's own
 * fields rather than against another output.
 */
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { compareReleaseDirs } from '../../src/diff/compare.ts';
import { renderMarkdown, renderText } from '../../src/diff/render.ts';
import type { ColumnChange, DiffReport } from '../../src/diff/types.ts';
import { MESSAGE, PLAIN, rankedInputChanges, sigmaWords, signedNumber, TYPOGRAPHIC } from '../../src/diff/vocabulary.ts';
import { comparisonView } from '../../src/report/compare/view.ts';
import { DEMO_DIR } from './fixtures.ts';

let real: DiffReport;

beforeAll(async () => {
  real = await compareReleaseDirs(join(DEMO_DIR, '2026.2'), join(DEMO_DIR, '2026.3'), { workers: 0 });
}, 180_000);

/** A number as written by any of the typographies, back to a number ("−1.3" and "-1.3" alike). */
function num(text: string): number {
  return Number(text.replace('\u2212', '-'));
}

const NUMBER = '([+\\-\u2212]?\\d+\\.\\d+)';

interface Stated {
  a: number | null;
  b: number | null;
  shift: number;
  sigma: number | null;
  sigmaDiff: number | null;
  noSpread: boolean;
}

/** The headline of the terminal text: "H0: a -> b km/s/Mpc, shift X ± D km/s/Mpc (S sigma; ...". */
function fromText(r: DiffReport): Stated {
  const line = renderText(r)
    .split('\n')
    .find((l) => l.startsWith('H0: '))!;
  const values = new RegExp(`^H0: ${NUMBER} -> ${NUMBER} km/s/Mpc`).exec(line);
  const shift = new RegExp(`shift ${NUMBER}(?: ± ${NUMBER})? km/s/Mpc \\((?:${NUMBER} sigma)?`).exec(line)!;
  return {
    a: values ? num(values[1]) : null,
    b: values ? num(values[2]) : null,
    shift: num(shift[1]),
    sigma: shift[3] === undefined ? null : num(shift[3]),
    sigmaDiff: shift[2] === undefined ? null : num(shift[2]),
    noSpread: line.includes('no statistical spread'),
  };
}

/** The message's first line: "... H0 moved by X km/s/Mpc** from a to b km/s/Mpc, S σ of the difference (σ = D km/s/Mpc)". */
function fromMessage(r: DiffReport): Stated {
  const line = renderMarkdown(r).split('\n')[0];
  const shift = new RegExp(`H0 moved by ${NUMBER} km/s/Mpc`).exec(line)!;
  const values = new RegExp(` from ${NUMBER} to ${NUMBER} km/s/Mpc`).exec(line);
  const sigma = new RegExp(`${NUMBER} σ of the difference \\(σ = ${NUMBER} km/s/Mpc\\)`).exec(line);
  return {
    a: values ? num(values[1]) : null,
    b: values ? num(values[2]) : null,
    shift: num(shift[1]),
    sigma: sigma ? num(sigma[1]) : null,
    sigmaDiff: sigma ? num(sigma[2]) : null,
    noSpread: line.includes('no statistical spread'),
  };
}

/** The page's headline: "H₀ moved by X km/s/Mpc, from a to b. That is S σ of the uncertainty of the difference (σ = D km/s/Mpc; ...". */
function fromPage(r: DiffReport): Stated {
  const text = comparisonView(r, []).headline;
  const shift = new RegExp(`H₀ moved by ${NUMBER} km/s/Mpc`).exec(text)!;
  const values = new RegExp(`, from ${NUMBER} to ${NUMBER}\\.`).exec(text);
  const sigma = new RegExp(`That is ${NUMBER} σ of the uncertainty of the difference \\(σ = ${NUMBER} km/s/Mpc`).exec(text);
  return {
    a: values ? num(values[1]) : null,
    b: values ? num(values[2]) : null,
    shift: num(shift[1]),
    sigma: sigma ? num(sigma[1]) : null,
    sigmaDiff: sigma ? num(sigma[2]) : null,
    noSpread: text.includes('no statistical spread'),
  };
}

/** What the report's fields say, rounded as every headline rounds (2 decimals; the shift in sigma to 1). */
function expected(r: DiffReport): Stated {
  const h = r.h0!;
  const round = (x: number, d: number) => Number(x.toFixed(d));
  return {
    a: h.a === null ? null : round(h.a, 2),
    b: h.b === null ? null : round(h.b, 2),
    shift: round(h.delta!, 2),
    sigma: h.deterministic || h.delta_sigma === null ? null : round(h.delta_sigma, 1),
    sigmaDiff: h.sigma_diff === null ? null : round(h.sigma_diff, 2),
    noSpread: h.deterministic,
  };
}

function withShift(r: DiffReport, edit: (h: NonNullable<DiffReport['h0']>) => void): DiffReport {
  const copy = structuredClone(r);
  edit(copy.h0!);
  return copy;
}

describe('the terminal text, the message and the page state the same headline', () => {
  it('on the demo comparison 2026.2 -> 2026.3', () => {
    expect(real.h0?.delta).not.toBeNull();
    const want = expected(real);
    expect(fromText(real)).toEqual(want);
    expect(fromMessage(real)).toEqual(want);
    expect(fromPage(real)).toEqual(want);
  });

  it('for a negative shift, each in its own minus sign', () => {
    const r = withShift(real, (h) => {
      h.delta = -1.2345;
      h.delta_sigma = -1.37;
      h.b = h.a! - 1.2345;
    });
    const want = expected(r);
    expect(want.shift).toBe(-1.23);
    expect(fromText(r)).toEqual(want);
    expect(fromMessage(r)).toEqual(want);
    expect(fromPage(r)).toEqual(want);
    // the sign itself: ASCII in the terminal and the message, U+2212 on the page
    expect(renderText(r)).toContain('shift -1.23');
    expect(renderMarkdown(r)).toContain('H0 moved by -1.23 km/s/Mpc');
    expect(comparisonView(r, []).headline).toContain('H₀ moved by \u22121.23 km/s/Mpc');
  });

  it('for a shift without statistical spread (a change of choices at fixed noise)', () => {
    const r = withShift(real, (h) => {
      h.deterministic = true;
      h.sigma_diff = 0;
      h.delta_sigma = null;
    });
    for (const stated of [fromText(r), fromMessage(r), fromPage(r)]) {
      expect(stated.noSpread).toBe(true);
      expect(stated.sigma).toBeNull();
      expect(stated.shift).toBe(expected(r).shift);
    }
  });
});

describe('one sigma wording, the typography a parameter', () => {
  it("writes the shift in sigma with one decimal and the typography's sign and name", () => {
    expect(sigmaWords(1.26, PLAIN)).toBe('+1.3 sigma');
    expect(sigmaWords(1.26, MESSAGE)).toBe('+1.3 σ');
    expect(sigmaWords(1.26, TYPOGRAPHIC)).toBe('+1.3 σ');
    expect(sigmaWords(-0.84, PLAIN)).toBe('-0.8 sigma');
    expect(sigmaWords(-0.84, TYPOGRAPHIC)).toBe('\u22120.8 σ');
    expect(sigmaWords(null, PLAIN)).toBe('—');
  });

  it('a number that rounds to zero keeps its sign in plain text only', () => {
    expect(signedNumber(-0.001, 2, PLAIN)).toBe('-0.00');
    expect(signedNumber(0.001, 2, PLAIN)).toBe('+0.00');
    expect(signedNumber(-0.001, 2, TYPOGRAPHIC)).toBe('0.00');
    expect(signedNumber(0, 2, PLAIN)).toBe('0.00');
  });

  it('the parameter table of the terminal and the page give each parameter the same shift in sigma', () => {
    const view = comparisonView(real, []);
    const text = renderText(real).split('\n');
    const rows = view.parameters.rows;
    const shown = real.parameters.filter((p) => !p.deterministic && p.delta_sigma !== null);
    expect(shown.length).toBeGreaterThan(0);
    for (const p of shown) {
      const line = text.find((l) => l.startsWith(`  ${p.name.padEnd(20)} `))!;
      const plain = / ([+-]?\d+\.\d) sigma/.exec(line)![1];
      const row = rows.find((cells) => cells[0] === p.name)!;
      const page = row[5]!.replace(' σ', '');
      expect(num(plain)).toBe(Number(p.delta_sigma!.toFixed(1)));
      expect(num(page)).toBe(num(plain) === 0 ? 0 : num(plain));
    }
  });
});

/** The table names of the message's "Largest input changes" list, in order. */
function messageOrder(r: DiffReport): string[] {
  const lines = renderMarkdown(r).split('\n');
  const start = lines.indexOf('Largest input changes:');
  const out: string[] = [];
  for (const l of lines.slice(start + 1)) {
    const m = /^- `([a-z_]+)`:/.exec(l);
    if (!m) break;
    out.push(m[1]);
  }
  return out;
}

/** The tables of the page's opening list of input changes, in order (each line begins with its file). */
function pageOrder(r: DiffReport): string[] {
  return comparisonView(r, []).largestInputs.map((line) => {
    const t = r.inputs.find((x) => line.startsWith(`${x.file_b ?? x.file_a}:`) || line.startsWith(`${x.file_a ?? '(absent)'} → `));
    return t ? t.table : line.startsWith('release.yaml') ? 'analysis' : line;
  });
}

describe('one ranking of the input changes', () => {
  it("the message and the page list the demo comparison's changes in the same order", () => {
    const message = messageOrder(real);
    const page = pageOrder(real);
    expect(message.length).toBeGreaterThan(1);
    expect(page).toEqual(message);
    // largest first: by rows added, removed and changed (no column or analysis change here)
    const size = (table: string) => {
      const t = real.inputs.find((x) => x.table === table)!;
      return t.added + t.removed + t.changed;
    };
    for (let i = 1; i < message.length; i++) expect(size(message[i - 1])).toBeGreaterThanOrEqual(size(message[i]));
  });

  it('a table whose columns changed ranks above any count of changed rows, in both', () => {
    const r = structuredClone(real);
    const touched = r.inputs.filter((t) => t.added + t.removed + t.changed > 0);
    expect(touched.length).toBeGreaterThan(1);
    // the table with the fewest changed rows gets a renamed column
    const smallest = touched.reduce((m, t) => (t.added + t.removed + t.changed < m.added + m.removed + m.changed ? t : m));
    const renamed: ColumnChange = {
      kind: 'renamed',
      column_a: 'note',
      column_b: 'remark',
      unit_a: null,
      unit_b: null,
      contract: false,
      detail: 'extra column note renamed to remark',
    };
    smallest.column_changes = [renamed];
    expect(rankedInputChanges(r)[0]).toMatchObject({ kind: 'table', change: { table: smallest.table } });
    expect(messageOrder(r)[0]).toBe(smallest.table);
    expect(pageOrder(r)[0]).toBe(smallest.table);
    expect(pageOrder(r)).toEqual(messageOrder(r));
  });
});
