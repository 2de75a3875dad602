/**
 * Random damage to a copy of a data release, for the robustness fuzz test.
 * Every mutation is drawn from a seeded stream (src/demo/random.ts), so a case
 * is reproduced exactly from its seed and number; the description says what was
 * done, to rerun or debug one case by hand.
 *
 * Kinds (each acts on one file of the release):
 * - cell:      one to three data cells replaced by hostile or extreme values;
 * - row:       data rows deleted (sometimes all of them);
 * - header:    ECSV header damage (units, datatypes, names, YAML, delimiter) or
 *              the column-name line;
 * - bytes:     random bytes flipped, inserted or deleted, invalid UTF-8, NULs;
 * - truncate:  the file cut at a random byte;
 * - duplicate: lines repeated (data rows, header lines, the column-name line);
 * - swap:      two columns swapped in the body only, or in names and body;
 * - yaml:      release.yaml values, keys, variants and syntax;
 * - file:      a table removed, emptied, renamed, or replaced by another table.
 */
import { existsSync, readdirSync, readFileSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { Rng } from '../../src/demo/random.ts';

export const MUTATION_KINDS = ['cell', 'row', 'header', 'bytes', 'truncate', 'duplicate', 'swap', 'yaml', 'file'] as const;
export type MutationKind = (typeof MUTATION_KINDS)[number];

export interface Mutation {
  kind: MutationKind;
  /** File of the release that was damaged. */
  file: string;
  /** What was done, in words. */
  description: string;
}

const TABLE_FILES = ['systems.ecsv', 'parallax.ecsv', 'main_sequence.ecsv', 'cepheids.ecsv', 'sn_calibrators.ecsv', 'sn_hubble_flow.ecsv'];

/** Cell values that readers and the ladder must survive. */
const CELL_VALUES = [
  '',
  'nan',
  'NaN',
  'inf',
  '-Infinity',
  '1e400',
  '-1e400',
  '0',
  '-0',
  '-1',
  '1e-320',
  '1e308',
  '-1e308',
  'abc',
  '""',
  '"',
  '1,5',
  '  ',
  '#',
  '#12',
  '0x10',
  '1_000',
  '1e',
  '.',
  '-',
  '+',
  '١٢',
  '∞',
  '\u200b',
  'true',
  'null',
  '1e-7',
  '-1e6',
  '1e6',
  '9'.repeat(400),
  '0.' + '0'.repeat(300) + '1',
  'Alder',
  '<script>',
  '{1+1}',
  '$5',
  '\t',
  'é',
  '🚀',
  '1.5.5',
  '--1',
  '1e+',
  ' 1 ',
];

const UNITS = ['uas', 'mas', 'arcsec', 'deg', 'rad', 'h', 'd', 'yr', 'Myr', 'Gyr', 'kpc', '', 'm', 'mag', 'mag**2', 'erg', 'dex', 'km/s', '%'];
const DATATYPES = ['int64', 'string', 'float32', 'float64', 'bool', 'complex128', 'uint8', 'object', 'float128'];
const YAML_VALUES = [
  'null',
  '-1',
  '0',
  '1e9',
  '"text"',
  '[1, 2]',
  '[2, 1]',
  '{a: 1}',
  'true',
  '.nan',
  '.inf',
  '-.inf',
  '1e-300',
  '0.5',
  '3',
  '100',
  '[]',
  "''",
  '~',
  '2026-13-45',
  '[0.4]',
  '[0.4, 0.4]',
  '[-1, 10]',
  '0.0231',
  '1.5',
  '-0.55',
  '20',
  '0.000001',
];

function pick<T>(rng: Rng, xs: readonly T[]): T {
  return xs[rng.int(0, xs.length - 1)]!;
}

/** Indices of the data lines of a comma-delimited ECSV text (after the column-name line), and of the column-name line. */
function bodyLines(lines: string[]): { names: number; data: number[] } {
  let names = 0;
  while (names < lines.length && lines[names]!.startsWith('#')) names++;
  const data: number[] = [];
  for (let i = names + 1; i < lines.length; i++) if (lines[i]!.trim() !== '') data.push(i);
  return { names, data };
}

function tableFiles(dir: string): string[] {
  return TABLE_FILES.filter((f) => existsSync(join(dir, f)));
}

/** Damage one file of the release in `dir` (in place) and say what was done. */
export function mutateRelease(dir: string, kind: MutationKind, rng: Rng): Mutation {
  const file = kind === 'yaml' ? 'release.yaml' : pick(rng, tableFiles(dir));
  const path = join(dir, file);
  const text = readFileSync(path, 'utf8');
  const lines = text.split('\n');
  const done = (description: string): Mutation => ({ kind, file, description });

  switch (kind) {
    case 'cell': {
      const { data } = bodyLines(lines);
      const what: string[] = [];
      for (let k = rng.int(1, 3); k > 0; k--) {
        const i = pick(rng, data);
        const cells = lines[i]!.split(',');
        const j = rng.int(0, cells.length - 1);
        // Half the time a value of the same column from another row (duplicate ids, swapped systems) or a scaled number.
        let value: string;
        const other = lines[pick(rng, data)]!.split(',')[j] ?? '';
        const x = Number(cells[j]);
        const r = rng.uniform();
        if (r < 0.25) value = other;
        else if (r < 0.4 && Number.isFinite(x) && cells[j] !== '') value = String(x * pick(rng, [0, -1, 1e6, 1e-6, 1e300, 1e-300]));
        else value = pick(rng, CELL_VALUES);
        what.push(`line ${i + 1} cell ${j + 1}: ${JSON.stringify(cells[j])} -> ${JSON.stringify(value)}`);
        cells[j] = value;
        lines[i] = cells.join(',');
      }
      writeFileSync(path, lines.join('\n'));
      return done(what.join('; '));
    }
    case 'row': {
      const { data } = bodyLines(lines);
      if (rng.chance(0.2)) {
        const keep = new Set(data);
        writeFileSync(path, lines.filter((_l, i) => !keep.has(i)).join('\n'));
        return done(`all ${data.length} data rows deleted`);
      }
      const n = Math.min(data.length, rng.chance(0.5) ? 1 : rng.int(2, Math.max(2, Math.floor(data.length / 2))));
      const drop = new Set<number>();
      while (drop.size < n) drop.add(pick(rng, data));
      writeFileSync(path, lines.filter((_l, i) => !drop.has(i)).join('\n'));
      return done(`${n} data rows deleted (first at line ${Math.min(...drop) + 1})`);
    }
    case 'header': {
      const { names } = bodyLines(lines);
      const colLines = lines.map((l, i) => (/^# - \{name:/.test(l) ? i : -1)).filter((i) => i >= 0);
      const r = rng.int(0, 7);
      if (r === 0 && colLines.length > 0) {
        const i = pick(rng, colLines);
        const unit = pick(rng, UNITS);
        const before = lines[i]!;
        lines[i] = /unit: [^,}]*/.test(before)
          ? before.replace(/unit: [^,}]*/, `unit: ${JSON.stringify(unit)}`)
          : before.replace(/datatype:/, `unit: ${JSON.stringify(unit)}, datatype:`);
        writeFileSync(path, lines.join('\n'));
        return done(`line ${i + 1}: unit set to ${JSON.stringify(unit)}`);
      }
      if (r === 1 && colLines.length > 0) {
        const i = pick(rng, colLines);
        const dt = pick(rng, DATATYPES);
        lines[i] = lines[i]!.replace(/datatype: [^,}]*/, `datatype: ${dt}`);
        writeFileSync(path, lines.join('\n'));
        return done(`line ${i + 1}: datatype set to ${dt}`);
      }
      if (r === 2 && colLines.length > 0) {
        const i = pick(rng, colLines);
        const removed = lines.splice(i, 1)[0];
        writeFileSync(path, lines.join('\n'));
        return done(`header line ${i + 1} deleted (${removed})`);
      }
      if (r === 3 && colLines.length > 0) {
        const i = pick(rng, colLines);
        const name = pick(rng, ['parallax_er', 'sytem', 'x', '', 'star star', '"quoted"', 'period']);
        lines[i] = lines[i]!.replace(/name: [^,}]*/, `name: ${JSON.stringify(name)}`);
        writeFileSync(path, lines.join('\n'));
        return done(`line ${i + 1}: column renamed to ${JSON.stringify(name)} in the header only`);
      }
      if (r === 4) {
        const i = rng.int(0, Math.max(0, names - 1));
        const junk = pick(rng, [
          '# \t: broken',
          '# - {name: [',
          '#   ? complex',
          '# %ECSV 2.0',
          'not a comment',
          '# delimiter: ";"',
          "# delimiter: ' '",
          '# ---',
          '#',
        ]);
        lines.splice(i, 0, junk);
        writeFileSync(path, lines.join('\n'));
        return done(`line ${i + 1}: inserted ${JSON.stringify(junk)}`);
      }
      if (r === 5) {
        const cols = lines[names]!.split(',');
        const j = rng.int(0, cols.length - 1);
        const name = pick(rng, ['', 'X', cols[(j + 1) % cols.length]!, `${cols[j]}_extra`, cols[j]!.toUpperCase()]);
        cols[j] = name;
        lines[names] = cols.join(',');
        writeFileSync(path, lines.join('\n'));
        return done(`column-name line ${names + 1}: column ${j + 1} renamed to ${JSON.stringify(name)}`);
      }
      if (r === 6) {
        const cols = lines[names]!.split(',');
        const j = rng.int(0, cols.length - 1);
        cols.splice(j, 1);
        lines[names] = cols.join(',');
        writeFileSync(path, lines.join('\n'));
        return done(`column-name line ${names + 1}: name ${j + 1} removed`);
      }
      // r === 7: the delimiter line changed.
      const d = pick(rng, ["' '", "'\\t'", "';'", "','", '"|"']);
      const i = lines.findIndex((l) => l.startsWith('# delimiter:'));
      if (i >= 0) lines[i] = `# delimiter: ${d}`;
      else lines.splice(2, 0, `# delimiter: ${d}`);
      writeFileSync(path, lines.join('\n'));
      return done(`delimiter set to ${d}`);
    }
    case 'bytes': {
      const bytes = [...readFileSync(path)];
      const what: string[] = [];
      for (let k = rng.int(1, 6); k > 0; k--) {
        const at = rng.int(0, bytes.length - 1);
        const op = rng.int(0, 4);
        if (op === 0) {
          const b = rng.int(0, 255);
          what.push(`byte ${at} set to 0x${b.toString(16)}`);
          bytes[at] = b;
        } else if (op === 1) {
          const b = pick(rng, [0x00, 0x0d, 0x22, 0x2c, 0x23, 0x0a, 0xff, 0xc3, 0x80, rng.int(0, 255)]);
          what.push(`byte 0x${b.toString(16)} inserted at ${at}`);
          bytes.splice(at, 0, b);
        } else if (op === 2) {
          const n = rng.int(1, 40);
          what.push(`${n} bytes deleted at ${at}`);
          bytes.splice(at, n);
        } else if (op === 3) {
          what.push(`invalid UTF-8 (0xc3 0x28) inserted at ${at}`);
          bytes.splice(at, 0, 0xc3, 0x28);
        } else {
          what.push(`byte-order mark inserted at ${at}`);
          bytes.splice(at, 0, 0xef, 0xbb, 0xbf);
        }
      }
      writeFileSync(path, Uint8Array.from(bytes));
      return done(what.join('; '));
    }
    case 'truncate': {
      const bytes = readFileSync(path);
      const at = rng.chance(0.1) ? 0 : rng.int(0, bytes.length - 1);
      writeFileSync(path, bytes.subarray(0, at));
      return done(`cut at byte ${at} of ${bytes.length}`);
    }
    case 'duplicate': {
      const what: string[] = [];
      for (let k = rng.int(1, 3); k > 0; k--) {
        const i = rng.chance(0.7) ? pick(rng, bodyLines(lines).data) : rng.int(0, lines.length - 1);
        const times = rng.int(1, 3);
        lines.splice(i, 0, ...Array.from({ length: times }, () => lines[i]!));
        what.push(`line ${i + 1} repeated ${times}x`);
      }
      writeFileSync(path, lines.join('\n'));
      return done(what.join('; '));
    }
    case 'swap': {
      const { names, data } = bodyLines(lines);
      const n = lines[names]!.split(',').length;
      const a = rng.int(0, n - 1);
      let b = rng.int(0, n - 2);
      if (b >= a) b += 1;
      const withNames = rng.chance(0.3);
      const swap = (i: number) => {
        const cells = lines[i]!.split(',');
        [cells[a], cells[b]] = [cells[b]!, cells[a]!];
        lines[i] = cells.join(',');
      };
      for (const i of data) swap(i);
      if (withNames) swap(names);
      writeFileSync(path, lines.join('\n'));
      return done(`columns ${a + 1} and ${b + 1} swapped in the ${withNames ? 'names and the body' : 'body only'}`);
    }
    case 'yaml': {
      const r = rng.int(0, 5);
      const keyLines = lines.map((l, i) => (/^\s*[a-z_0-9]+:/.test(l) ? i : -1)).filter((i) => i >= 0);
      if (r <= 1) {
        const i = pick(rng, keyLines);
        const value = pick(rng, YAML_VALUES);
        const before = lines[i]!;
        lines[i] = before.replace(/^(\s*[a-z_0-9]+:).*$/, `$1 ${value}`);
        writeFileSync(path, lines.join('\n'));
        return done(`line ${i + 1}: ${JSON.stringify(before.trim())} -> value ${value}`);
      }
      if (r === 2) {
        const i = pick(rng, keyLines);
        const removed = lines.splice(i, 1)[0];
        writeFileSync(path, lines.join('\n'));
        return done(`line ${i + 1} deleted (${removed!.trim()})`);
      }
      if (r === 3) {
        const add = pick(rng, [
          '  clip_sigmaa: 4',
          'blinding: false',
          '  z_mni: 0.01',
          'extra: 1',
          '  variants: []',
          '    - { name: "no metallicity term" }',
          '    - { z_min: 0.02 }',
          '    - "just a string"',
          '    - { name: "x", r_v: "three" }',
        ]);
        const at = add.startsWith('  ') ? lines.length - 1 : rng.int(0, lines.length - 1);
        lines.splice(at, 0, add);
        writeFileSync(path, lines.join('\n'));
        return done(`inserted ${JSON.stringify(add)} at line ${at + 1}`);
      }
      if (r === 4) {
        const i = pick(rng, keyLines);
        const before = lines[i]!;
        lines[i] = rng.chance(0.5) ? `\t${before}` : before.replace(/^\s*/, (m) => ' '.repeat(Math.max(0, m.length + pick(rng, [-2, 1, 3]))));
        writeFileSync(path, lines.join('\n'));
        return done(`line ${i + 1}: indentation changed`);
      }
      const i = pick(rng, keyLines);
      const junk = pick(rng, ['"', '[', '{', ': :', '&anchor', '*alias', '!!binary x', '? ', '- - -', '%YAML 9']);
      lines[i] = `${lines[i]} ${junk}`;
      writeFileSync(path, lines.join('\n'));
      return done(`line ${i + 1}: appended ${JSON.stringify(junk)}`);
    }
    case 'file': {
      const r = rng.int(0, 4);
      if (r === 0) {
        rmSync(path);
        return done('file removed');
      }
      if (r === 1) {
        writeFileSync(path, '');
        return done('file emptied');
      }
      if (r === 2) {
        const to = pick(rng, [
          file.replace('.ecsv', '.csv'),
          file.replace('.ecsv', '.vot'),
          file.replace('.ecsv', '.txt'),
          file.replace(/^(\w)/, (c) => c.toUpperCase()),
          file.replace('_', ''),
          file.replace('.ecsv', '.ecsv.bak'),
        ]);
        renameSync(path, join(dir, to));
        return done(`renamed to ${to}`);
      }
      if (r === 3) {
        const other = pick(
          rng,
          tableFiles(dir).filter((f) => f !== file),
        );
        writeFileSync(path, readFileSync(join(dir, other)));
        return done(`replaced by a copy of ${other}`);
      }
      const names = readdirSync(dir).filter((f) => f.endsWith('.ecsv') && f !== file);
      const other = pick(rng, names);
      writeFileSync(join(dir, other.replace('.ecsv', '.csv')), readFileSync(path));
      return done(`a second copy of ${file} content written as ${other.replace('.ecsv', '.csv')}`);
    }
  }
}
