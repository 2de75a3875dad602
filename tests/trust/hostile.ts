/**
 * A corpus of hostile text, and a valid release that carries it everywhere
 * data text can go: system ids, star ids, supernova ids, the release title and
 * notes.md. Built from demo release 2026.1 by renaming (every reference to a
 * renamed id follows), so the release calibrates exactly like the original.
 *
 * What each string tries (stack notes, items 6-8; common practice, no source):
 * HTML and script injection, MDX expressions and JSX, template literals, math
 * delimiters of remark-math and KaTeX, Markdown links and images with unsafe
 * schemes, comments, entity-looking text, table pipes, bidirectional and
 * invisible characters, and a 10 000-character id.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { copyDemo, editTable, setManifestValue } from './releaseCopy.ts';

/** Over 10 000 characters of markup-like text, as one id. */
export const LONG_ID = `long-${'<{$`&'.repeat(2000)}`;

export const HOSTILE: readonly string[] = [
  '<script>alert("id")</script>',
  '<img src=x onerror=alert(1)>',
  '{1+1}',
  '{x}',
  '`backticks` and ``more``',
  '${process.exit(1)}',
  '$5 and $6',
  '$$x^2$$',
  '\\(a+b\\) and \\[c\\]',
  '[link](javascript:alert(1))',
  '![img](data:text/html;base64,PHNjcmlwdD4=)',
  '<!-- comment -->',
  'c<d',
  'a & b &amp; &lt;tag&gt;',
  '"double" and \'single\' quotes',
  'pipe | in | cells',
  '*bold* _em_ # not a heading',
  'שלום עולם مرحبا',
  'evil\u202Eright-to-left override\u202C',
  'emoji 🔭👩‍🚀🌌',
  'zero\u200Bwidth\u200Djoin\u2060word',
  'javascript:alert(document.cookie)',
  'data:text/html,<script>alert(1)</script>',
  LONG_ID,
];

export const HOSTILE_TITLE = '<script>alert("title")</script> {1+1} ${x} $5 and $6 <b>bold</b> & \u202Eevil 🔭';

/** Authored notes with every Markdown, HTML, MDX and math construct that must stay inert. */
export const HOSTILE_NOTES = [
  '# main',
  '',
  'A price of $5 and $6. Math $$x$$ and \\(y\\) and \\[z\\].',
  '',
  'An expression {1+1} and {x} and ${process.exit(1)} and `code {x}` and ``two ` ticks``.',
  '',
  '<script>alert("notes")</script>',
  '',
  '<img src=x onerror=alert(1)>',
  '',
  '<!-- hidden comment -->',
  '',
  'c<d and a>b & c.',
  '',
  '[click me](javascript:alert(1)) [data link](data:text/html;base64,PHNjcmlwdD4=) [ok link](https://example.org/ok) [JaVaScRiPt](  JAVA\tSCRIPT:alert(2))',
  '',
  '![pixel](data:image/png;base64,AAAA) ![remote](https://example.org/p.png)',
  '',
  '<a href="javascript:alert(3)">raw anchor</a>',
  '',
  '[ref link][r]',
  '',
  '[r]: javascript:alert(4)',
  '',
  '## top',
  '',
  'Right-to-left: שלום \u202Eevil\u202C, emoji 🔭👩‍🚀 and zero\u200Bwidth.',
  '',
  '| a | b |',
  '|---|---|',
  '| <b>x</b> | {y} |',
  '',
  '### checks',
  '',
].join('\n');

export interface HostileRelease {
  dir: string;
  /** Old id -> hostile id, per kind. */
  systems: Map<string, string>;
  stars: Map<string, string>;
  sns: Map<string, string>;
  /** Hostile ids of the calibrator supernovae (every calibrator is renamed). */
  calibrators: string[];
}

/** Write the hostile copy of demo release 2026.1 into `parent/<name>`. */
export function writeHostileRelease(parent: string, name = '2026.1'): HostileRelease {
  const dir = copyDemo('2026.1', parent, name);
  const systems = new Map<string, string>();
  const stars = new Map<string, string>();
  const sns = new Map<string, string>();

  // Systems: every one of the 19 gets its own hostile id, the long one last (a supernova host).
  editTable(dir, 'systems', (t, col) => {
    const ids = t.rows.map((r) => r[col('system')]!);
    const pool = [...HOSTILE.slice(0, ids.length - 1), LONG_ID];
    ids.forEach((id, i) => systems.set(id, pool[i]!));
  });
  // Stars: the first rows of each star table (and the same star wherever it appears).
  for (const table of ['parallax', 'cepheids', 'main_sequence'] as const) {
    const lines = readFileSync(join(dir, `${table}.ecsv`), 'utf8');
    const firstStars = lines.split('\n').filter((l) => !l.startsWith('#')).slice(1, 4).map((l) => l.split(',')[0]!);
    for (const s of firstStars) if (!stars.has(s)) stars.set(s, HOSTILE[stars.size % HOSTILE.length]!);
  }
  // Supernovae: every calibrator and the first Hubble-flow rows.
  const calibrators: string[] = [];
  for (const table of ['sn_calibrators', 'sn_hubble_flow'] as const) {
    editTable(dir, table, (t, col) => {
      const ids = t.rows.map((r) => r[col('sn')]!).slice(0, table === 'sn_calibrators' ? undefined : 6);
      for (const id of ids) {
        const to = HOSTILE[(sns.size + 5) % HOSTILE.length]!;
        sns.set(id, to);
        if (table === 'sn_calibrators') calibrators.push(to);
      }
    });
  }
  const rename = (table: string, column: string, map: Map<string, string>) =>
    editTable(dir, table, (t, col) => {
      const j = col(column);
      for (const r of t.rows) r[j] = map.get(r[j]!) ?? r[j]!;
    });
  for (const table of ['systems', 'parallax', 'main_sequence', 'cepheids', 'sn_calibrators']) rename(table, 'system', systems);
  for (const table of ['parallax', 'main_sequence', 'cepheids']) rename(table, 'star', stars);
  for (const table of ['sn_calibrators', 'sn_hubble_flow']) rename(table, 'sn', sns);

  setManifestValue(dir, 'title', JSON.stringify(HOSTILE_TITLE));
  writeFileSync(join(dir, 'notes.md'), HOSTILE_NOTES);
  return { dir, systems, stars, sns, calibrators };
}
