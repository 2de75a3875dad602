/**
 * release.yaml: manifest keys, analysis choices and variants. Problems name
 * release.yaml, the line, the key (as the issue's column), expected and found.
 */
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { normaliseDate, parseManifest } from '../../src/io/manifest.ts';
import { ANALYSIS_KEYS, DEFAULT_ANALYSIS } from '../../src/types/analysis.ts';
import { edited, issuesOf, lineOf, loadValid, onlyIssue, RELEASE_ID, VALID_MANIFEST, writeRelease } from './fixtures.ts';

/** Problems of a manifest text read for folder RELEASE_ID. */
const problemsOf = (text: string) => parseManifest(text, RELEASE_ID).problems;
const withAnalysis = (lines: string): string => VALID_MANIFEST.replace('analysis:\n', `analysis:\n${lines}`);

describe('release.yaml: valid', () => {
  test('manifest, analysis with defaults filled in, keys set, variants', () => {
    const r = parseManifest(VALID_MANIFEST, RELEASE_ID);
    expect(r.problems).toEqual([]);
    expect(r.manifest).toEqual({ id: '2026.1', title: 'First test release', date: '2026-03-01', previous: null, blinded: false });
    expect(r.analysis).toEqual({ ...DEFAULT_ANALYSIS, z_min: 0.02, clip_sigma: 3.0 });
    expect(r.analysisKeysSet).toEqual(['z_min', 'clip_sigma']);
    expect(r.variants).toEqual([{ name: 'no metallicity term', overrides: { fit_pl_metallicity: false } }]);
  });

  test('the defaults are not modified by reading', () => {
    const before = JSON.stringify(DEFAULT_ANALYSIS);
    const r = parseManifest(withAnalysis('  ms_color_range: [0.5, 1.0]\n'), RELEASE_ID);
    expect(r.analysis.ms_color_range).toEqual([0.5, 1.0]);
    expect(JSON.stringify(DEFAULT_ANALYSIS)).toBe(before);
  });

  test('previous and blinded and analysis may be absent; an empty analysis is all defaults', () => {
    const r = parseManifest(`id: '${RELEASE_ID}'\ntitle: t\ndate: "2026-01-31"\nanalysis:\n`, RELEASE_ID);
    expect(r.problems).toEqual([]);
    expect(r.manifest).toEqual({ id: RELEASE_ID, title: 't', date: '2026-01-31', previous: null, blinded: false });
    expect(r.analysis).toEqual(DEFAULT_ANALYSIS);
    expect(r.analysisKeysSet).toEqual([]);
    expect(r.variants).toEqual([]);
  });

  test('a bare date that a YAML 1.1 reader turns into a Date is accepted; times of day and impossible days are not', () => {
    expect(normaliseDate('2026-06-15')).toBe('2026-06-15');
    expect(normaliseDate(new Date(Date.UTC(2026, 5, 15)))).toBe('2026-06-15');
    expect(normaliseDate(new Date(Date.UTC(2026, 5, 15, 10)))).toBeUndefined();
    expect(normaliseDate('2026-02-29')).toBeUndefined(); // 2026 is not a leap year
    expect(normaliseDate('2028-02-29')).toBe('2028-02-29');
    expect(normaliseDate('2026-6-15')).toBeUndefined();
    expect(normaliseDate(20260615)).toBeUndefined();
  });

  test('through loadRelease: analysis, keys set and variants reach the Release', () => {
    const r = loadValid(writeRelease(edited((d) => (d.manifest = withAnalysis('  sn_alpha: 0.14\n')))));
    expect(r.analysis.sn_alpha).toBe(0.14);
    expect(r.analysisKeysSet).toEqual(['sn_alpha', 'z_min', 'clip_sigma']);
    expect(r.variants.map((v) => v.name)).toEqual(['no metallicity term']);
  });
});

describe('release.yaml: unknown keys suggest the nearest known one', () => {
  test('top level: blinding -> blinded', () => {
    const text = VALID_MANIFEST.replace('blinded: false', 'blinding: false');
    const issue = onlyIssue(
      problemsOf(text).map((p) => ({ file: '', ...p })),
      'unknown-key',
    );
    expect(issue).toMatchObject({ line: lineOf(text, 'blinding'), column: 'blinding', found: '"blinding"', hint: 'did you mean "blinded"?' });
  });

  test('analysis: clip_sigmaa -> clip_sigma, with file and line through loadRelease', () => {
    const manifest = withAnalysis('  clip_sigmaa: 4\n');
    const dir = writeRelease(edited((d) => (d.manifest = manifest)));
    const issue = onlyIssue(issuesOf(dir), 'unknown-key');
    expect(issue).toMatchObject({
      file: join(dir, 'release.yaml'),
      line: lineOf(manifest, 'clip_sigmaa'),
      column: 'analysis.clip_sigmaa',
      found: '"clip_sigmaa"',
      hint: 'did you mean "clip_sigma"?',
    });
    expect(issue.expected).toContain('clip_sigma');
  });

  test('in a variant: z_mni -> z_min', () => {
    const text = VALID_MANIFEST + '    - { name: "low z", z_mni: 0.01 }\n';
    const issue = onlyIssue(
      problemsOf(text).map((p) => ({ file: '', ...p })),
      'unknown-key',
    );
    expect(issue).toMatchObject({ line: lineOf(text, 'z_mni'), column: 'analysis.variants[2].z_mni', hint: 'did you mean "z_min"?' });
  });

  test('a key far from every known one says it is refused', () => {
    const text = VALID_MANIFEST + 'photometric_system: vega\n';
    const [p] = problemsOf(text);
    expect(p).toMatchObject({ code: 'unknown-key', line: lineOf(text, 'photometric_system'), hint: 'an unknown key is refused rather than ignored' });
  });
});

describe('release.yaml: manifest values', () => {
  const cases: [string, string, string, string, string][] = [
    // [description, replace what, with what, code, key]
    ['unquoted id', `id: "${RELEASE_ID}"`, `id: ${RELEASE_ID}`, 'bad-id', 'id'],
    ['id of another folder', `id: "${RELEASE_ID}"`, 'id: "2026.2"', 'id-mismatch', 'id'],
    ['empty title', 'title: "First test release"', 'title: ""', 'bad-title', 'title'],
    ['title that is a number', 'title: "First test release"', 'title: 2026', 'bad-title', 'title'],
    ['title with a terminal escape (YAML \\e)', 'title: "First test release"', 'title: "First \\e[2J release"', 'control-character', 'title'],
    ['title on two lines (YAML \\n)', 'title: "First test release"', 'title: "First\\ntest release"', 'control-character', 'title'],
    ['impossible date', 'date: 2026-03-01', 'date: 2026-02-30', 'bad-date', 'date'],
    ['date in another order', 'date: 2026-03-01', 'date: 01/03/2026', 'bad-date', 'date'],
    ['previous as a number', 'previous: null', 'previous: 2025.4', 'bad-previous', 'previous'],
    ['previous is itself', 'previous: null', `previous: "${RELEASE_ID}"`, 'bad-previous', 'previous'],
    ['blinded as text', 'blinded: false', 'blinded: "no"', 'bad-value', 'blinded'],
    ['blinded as yes (text in YAML 1.2)', 'blinded: false', 'blinded: yes', 'bad-value', 'blinded'],
    [
      'analysis as a list',
      'analysis:\n  z_min: 0.02\n  clip_sigma: 3.0\n  variants:\n    - { name: "no metallicity term", fit_pl_metallicity: false }\n',
      'analysis: [1, 2]\n',
      'bad-value',
      'analysis',
    ],
  ];
  test.each(cases)('%s', (_d, from, to, code, key) => {
    const text = VALID_MANIFEST.replace(from, to);
    expect(text).not.toBe(VALID_MANIFEST);
    const problems = problemsOf(text);
    expect(problems).toEqual([expect.objectContaining({ code, column: key, line: lineOf(text, `${key}:`) })]);
    expect(problems[0].expected).toBeTruthy();
    expect(problems[0].found).toBeTruthy();
  });

  test('the unquoted id message explains why quoting matters', () => {
    const [p] = problemsOf(VALID_MANIFEST.replace(`id: "${RELEASE_ID}"`, `id: ${RELEASE_ID}`));
    expect(p.found).toBe('2026.1');
    expect(p.hint).toContain('2026.10');
  });

  test.each(['id', 'title', 'date'])('missing %s', (key) => {
    const text = VALID_MANIFEST.split('\n')
      .filter((l) => !l.startsWith(`${key}:`))
      .join('\n');
    expect(problemsOf(text)).toEqual([expect.objectContaining({ code: 'missing-key', column: key, found: 'no such key' })]);
  });

  test('YAML syntax errors and duplicate keys name their line', () => {
    const broken = VALID_MANIFEST.replace('clip_sigma: 3.0', 'clip_sigma: [3.0');
    const p = problemsOf(broken);
    expect(p[0].code).toBe('bad-yaml');
    expect(p[0].line).toBeGreaterThanOrEqual(lineOf(broken, 'clip_sigma'));
    const dup = VALID_MANIFEST.replace('previous: null', 'previous: null\ntitle: "again"');
    expect(problemsOf(dup)).toEqual([expect.objectContaining({ code: 'bad-yaml', line: lineOf(dup, 'again') })]);
  });

  test('an empty file and a file that is not a mapping', () => {
    expect(problemsOf('')).toEqual([expect.objectContaining({ code: 'bad-manifest', found: 'an empty file' })]);
    expect(problemsOf('- a\n- b\n')).toEqual([expect.objectContaining({ code: 'bad-manifest', line: 1 })]);
  });
});

describe('release.yaml: analysis values', () => {
  // One or more bad values per key, each with the expectation of the message.
  const BAD: [string, string[]][] = [
    ['parallax_zero_point', ['"-0.02"', '.nan', '.inf', 'null', 'true']],
    ['parallax_zero_point_err', ['-0.001', '.inf']],
    ['parallax_floor', ['-1']],
    ['r_v', ['0', '-3.1', '"3.1"']],
    ['ms_color_range', ['[1.2, 0.4]', '[0.4]', '[0.4, 0.4]', '[0.4, .inf]', '0.4', '[0.4, "1.2"]']],
    ['ms_poly_degree', ['0', '7', '2.5', '"3"']],
    ['ms_feh_slope', ['.nan']],
    ['wesenheit_r', ['"0.386"']],
    ['pl_pivot_logp', ['-.inf']],
    ['fit_pl_metallicity', ['1', '"true"', 'yes', 'null']],
    ['sn_alpha', ['fit', '.nan']],
    ['sn_beta', ['"3.1"']],
    ['sn_mass_step_logmass', ['"10"', '.nan', 'ten']],
    ['z_min', ['-0.01']],
    ['z_max', ['0', '-1']],
    ['sigma_pec', ['-250']],
    ['q0', ['.nan']],
    ['j0', ['"1"']],
    ['clip_sigma', ['0', '-2', 'off']],
  ];
  test('every analysis key has bad values tested', () => {
    expect(BAD.map(([k]) => k).sort()).toEqual([...ANALYSIS_KEYS].sort());
  });
  test.each(BAD)('%s: bad values are refused with the line and the expected form', (key, values) => {
    for (const value of values) {
      const text = VALID_MANIFEST.replace('  z_min: 0.02\n  clip_sigma: 3.0\n', `  ${key}: ${value}\n`);
      const problems = problemsOf(text);
      expect(problems, `${key}: ${value}`).toEqual([
        expect.objectContaining({ code: 'bad-analysis-value', line: lineOf(text, `  ${key}:`), column: `analysis.${key}` }),
      ]);
      expect(problems[0].expected).toBeTruthy();
      expect(problems[0].found).toBeTruthy();
    }
  });

  test('good edge values are accepted', () => {
    const text = withAnalysis('  ms_poly_degree: 6\n  parallax_floor: 0\n  sn_alpha: null\n  sn_beta: 3.1\n  q0: -1\n');
    const r = parseManifest(text.replace('  clip_sigma: 3.0\n', '  clip_sigma: null\n'), RELEASE_ID);
    expect(r.problems).toEqual([]);
    expect(r.analysis).toMatchObject({ ms_poly_degree: 6, parallax_floor: 0, sn_alpha: null, sn_beta: 3.1, q0: -1, clip_sigma: null });
  });

  test('z_min must be below z_max', () => {
    const text = withAnalysis('  z_max: 0.01\n');
    expect(problemsOf(text)).toEqual([
      expect.objectContaining({ code: 'bad-analysis-value', line: lineOf(text, 'z_max'), expected: 'z_min < z_max', found: 'z_min = 0.02, z_max = 0.01' }),
    ]);
  });
});

describe('release.yaml: variants', () => {
  const variants = (items: string): string => VALID_MANIFEST.replace(/ {2}variants:\n[\s\S]*$/, `  variants:\n${items}`);

  test('several valid variants', () => {
    const r = parseManifest(
      variants('    - { name: "a", z_min: 0.01 }\n    - name: "b"\n      sn_alpha: 0.15\n      ms_color_range: [0.5, 1.1]\n'),
      RELEASE_ID,
    );
    expect(r.problems).toEqual([]);
    expect(r.variants).toEqual([
      { name: 'a', overrides: { z_min: 0.01 } },
      { name: 'b', overrides: { sn_alpha: 0.15, ms_color_range: [0.5, 1.1] } },
    ]);
  });

  const BAD: [string, string, string, string][] = [
    ['not a list', '    { name: "a", z_min: 0.01 }\n', 'bad-variants', 'analysis.variants'],
    ['an item that is not a mapping', '    - "a"\n', 'bad-variant', 'analysis.variants[1]'],
    ['no name', '    - { z_min: 0.01 }\n', 'bad-variant-name', 'analysis.variants[1].name'],
    ['an empty name', '    - { name: "", z_min: 0.01 }\n', 'bad-variant-name', 'analysis.variants[1].name'],
    ['a name that is not text', '    - { name: [1], z_min: 0.01 }\n', 'bad-variant-name', 'analysis.variants[1].name'],
    ['a name with a control character', '    - { name: "a\\u0007b", z_min: 0.01 }\n', 'control-character', 'analysis.variants[1].name'],
    ['two variants with one name', '    - { name: "a", z_min: 0.01 }\n    - { name: "a", z_max: 0.1 }\n', 'duplicate-variant', 'analysis.variants[2].name'],
    ['a variant that overrides nothing', '    - { name: "a" }\n', 'empty-variant', 'analysis.variants[1]'],
    ['a bad value', '    - { name: "a", ms_poly_degree: 9 }\n', 'bad-analysis-value', 'analysis.variants[1].ms_poly_degree'],
    ['an empty Hubble-flow range', '    - { name: "a", z_min: 0.2 }\n', 'bad-analysis-value', 'analysis.variants[1].z_min'],
    ['variants nested in a variant', '    - { name: "a", variants: [] }\n', 'unknown-key', 'analysis.variants[1].variants'],
  ];
  test.each(BAD)('%s', (_d, items, code, column) => {
    const text = variants(items);
    const problems = problemsOf(text);
    expect(problems).toHaveLength(1);
    expect(problems[0]).toMatchObject({ code, column });
    // The problem is on one of the variant lines, never elsewhere.
    const first = lineOf(text, '  variants:');
    expect(problems[0].line).toBeGreaterThanOrEqual(first);
    expect(problems[0].line).toBeLessThanOrEqual(text.split('\n').length);
  });

  test('the duplicate name points at the second and names the first', () => {
    const text = variants('    - { name: "a", z_min: 0.01 }\n    - { name: "a", z_max: 0.1 }\n');
    const [p] = problemsOf(text);
    expect(p.line).toBe(lineOf(text, 'z_max: 0.1'));
    expect(p.found).toBe(`"a" (also at line ${lineOf(text, 'z_min: 0.01')})`);
  });
});
