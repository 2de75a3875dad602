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
    const firstStars = lines
      .split('\n')
      .filter((l) => !l.startsWith('#'))
      .slice(1, 4)
      .map((l) => l.split(',')[0]!);
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

// ---------------------------------------------------------------------------
// Payloads that would run if text of a release were ever compiled (MDX, a template, an expression).

/** One hostile release note: what it tries, the text, and what the reader must see of it as text. */
export interface NotesPayload {
  name: string;
  /** The class of attack, as the report lists it. */
  kind: 'esm' | 'expression' | 'jsx' | 'html' | 'comment' | 'frontmatter' | 'math' | 'long line' | 'control characters';
  notes: string;
  /** Pieces of text the notes section must show, as text. */
  shows: string[];
  /** The canary file the payload writes if it runs (null: code that could only run in a browser, caught by the page checks). */
  canary: string | null;
}

/** Node code that leaves a file behind: the trace of a payload that ran. */
const writes = (canary: string) => `fs.writeFileSync(${JSON.stringify(canary)}, 'ran')`;
const viaImport = (canary: string) => `import('node:fs').then((fs) => ${writes(canary)})`;

/**
 * The corpus of hostile notes: ES module lines (import/export) at the start of paragraphs,
 * list items, headings, block quotes, tables and footnotes, written plainly or with character
 * references; expressions; JSX; HTML with scripts and handlers; comments that hide code;
 * front matter; math delimiters with KaTeX commands that link or add attributes; very long
 * lines; control characters (notes.md is free UTF-8 text: the contract forbids none). Each
 * writes its own canary file under `canaryDir` if it ever runs.
 */
export function notesPayloads(canaryDir: string): NotesPayload[] {
  const c = (name: string) => join(canaryDir, name);
  const imp = "import fs from 'node:fs'";
  const exp = (name: string) => `export const ran = ${writes(c(name))}`;
  const p = (name: string, kind: NotesPayload['kind'], notes: string, shows: string[], canary: string | null = c(name)): NotesPayload => ({
    name,
    kind,
    notes,
    shows,
    canary,
  });
  const long = `import ${'a'.repeat(100_000)} from 'node:fs'`;
  const braces = `{${'{'.repeat(20_000)}${viaImport(c('long-braces'))}${'}'.repeat(20_000)}}`;
  return [
    p('esm-paragraphs', 'esm', `${imp}\n\n${exp('esm-paragraphs')}\n`, [imp, exp('esm-paragraphs')]),
    p('esm-one-paragraph', 'esm', `${imp}\n${exp('esm-one-paragraph')}\n`, [imp, exp('esm-one-paragraph')]),
    p('esm-after-text', 'esm', `What changed.\n\nexport const ran = (await import('node:fs')).writeFileSync(${JSON.stringify(c('esm-after-text'))}, 'ran')\n`, [
      "export const ran = (await import('node:fs'))",
    ]),
    p('esm-export-default', 'esm', `${imp}\n\nexport default function Notes() { return ${writes(c('esm-export-default'))} }\n`, [
      'export default function Notes() { return fs.writeFileSync(',
    ]),
    p('esm-list-items', 'esm', `- ${imp}\n- ${exp('esm-list-items')}\n`, [imp, exp('esm-list-items')]),
    p('esm-ordered-list', 'esm', `3. ${imp}\n4. ${exp('esm-ordered-list')}\n`, [imp, exp('esm-ordered-list')]),
    p('esm-headings', 'esm', `# ${imp}\n\n## ${exp('esm-headings')}\n`, [imp, exp('esm-headings')]),
    p('esm-setext-heading', 'esm', `${imp}\n===\n\n${exp('esm-setext-heading')}\n---\n`, [imp, exp('esm-setext-heading')]),
    p('esm-block-quote', 'esm', `> ${imp}\n>\n> ${exp('esm-block-quote')}\n`, [imp, exp('esm-block-quote')]),
    p('esm-lazy-quote', 'esm', `> quoted\n${imp}\n\n> ${exp('esm-lazy-quote')}\n`, [imp, exp('esm-lazy-quote')]),
    p('esm-table', 'esm', `| ${imp} | b |\n|---|:-:|\n| ${exp('esm-table')} | export {} |\n`, [imp, exp('esm-table'), 'export {}']),
    p('esm-character-references', 'esm', `&#105;mport fs from 'node:fs'\n\n&#x65;xport const ran = ${writes(c('esm-character-references'))}\n`, [
      imp,
      `export const ran = ${writes(c('esm-character-references'))}`,
    ]),
    p('esm-footnote', 'esm', `A note.[^a]\n\n[^a]: ${imp}\n\n    ${exp('esm-footnote')}\n`, [imp, exp('esm-footnote')]),
    p('esm-code', 'esm', `    ${imp}\n    ${exp('esm-code')}\n\n\`\`\`mdx {exec}\n${imp}\n${exp('esm-code')}\n\`\`\`\n`, [imp, exp('esm-code')]),
    p('esm-emphasis', 'esm', `*${imp}*\n\n**${exp('esm-emphasis')}**\n`, [imp, exp('esm-emphasis')]),
    p('esm-hard-break', 'esm', `First line\\\n${imp}\n\n${exp('esm-hard-break')}\n`, [imp, exp('esm-hard-break')]),
    p('expression-inline', 'expression', `An expression {${viaImport(c('expression-inline'))}} in text.\n`, [`{${viaImport(c('expression-inline'))}}`]),
    p('expression-flow', 'expression', `{${viaImport(c('expression-flow'))}}\n`, [`{${viaImport(c('expression-flow'))}}`]),
    p('expression-template', 'expression', `A template \${${viaImport(c('expression-template'))}} and \`{x}\`.\n`, [
      `\${${viaImport(c('expression-template'))}}`,
      '{x}',
    ]),
    p('expression-link', 'expression', `[{${viaImport(c('expression-link'))}}](https://example.org/{x})\n`, [`{${viaImport(c('expression-link'))}}`]),
    p('jsx-component', 'jsx', `<Canary run={${viaImport(c('jsx-component'))}} />\n`, [`<Canary run={${viaImport(c('jsx-component'))}} />`]),
    p('jsx-fragment', 'jsx', `Text <>{${viaImport(c('jsx-fragment'))}}</> and <Fragment set:html={"<b>x</b>"} />.\n`, [
      `<>{${viaImport(c('jsx-fragment'))}}</>`,
      '<Fragment set:html={"<b>x</b>"} />',
    ]),
    p(
      'html-script',
      'html',
      `<script>require('node:fs').writeFileSync(${JSON.stringify(c('html-script'))}, 'ran')</script>\n\nand <script type="module">${viaImport(c('html-script'))}</script> inline.\n`,
      ["<script>require('node:fs')", '<script type="module">'],
      null,
    ),
    p(
      'html-attributes',
      'html',
      `<img src=x onerror="fetch('/steal')"> <a href="javascript:alert(1)" onclick="x()">a</a> <div style="background:url(javascript:x)" id="main">d</div> <svg onload=alert(1)>\n`,
      ['<img src=x onerror="fetch(\'/steal\')">', '<div style="background:url(javascript:x)" id="main">'],
      null,
    ),
    p(
      'html-embedded',
      'html',
      `<iframe srcdoc="<script>parent.x()</script>"></iframe>\n\n<object data="x.swf"></object><form action="/x"><input name=a></form><base href="https://example.org/">\n`,
      ['<iframe srcdoc="<script>parent.x()</script>"></iframe>', '<base href="https://example.org/">'],
      null,
    ),
    p('comment-hiding-expression', 'comment', `<!-- -->{${viaImport(c('comment-hiding-expression'))}}\n`, [
      `<!-- -->{${viaImport(c('comment-hiding-expression'))}}`,
    ]),
    p('comment-block', 'comment', `<!--\n${imp}\n${exp('comment-block')}\n-->\n`, [imp, exp('comment-block')]),
    p('comment-unclosed', 'comment', `Before.\n\n<!-- never closed\n\n${imp}\n\n${exp('comment-unclosed')}\n`, [
      '<!-- never closed',
      imp,
      exp('comment-unclosed'),
    ]),
    p('front-matter', 'frontmatter', `---\nlayout: ./evil.js\ntitle: x\n---\n\n${imp}\n\n${exp('front-matter')}\n`, [
      'layout: ./evil.js',
      imp,
      exp('front-matter'),
    ]),
    p(
      'math-delimiters',
      'math',
      `$$\n\\href{javascript:alert(1)}{click}\n$$\n\nInline $\\htmlData{onclick=x}{y}$ and $5 and $6, \\\\(a\\\\).\n`,
      ['\\href{javascript:alert(1)}{click}', '$\\htmlData{onclick=x}{y}$ and $5 and $6'],
      null,
    ),
    p('long-line', 'long line', `${long}\n\n${braces}\n`, [long, braces], c('long-braces')),
    p(
      'control-characters',
      'control characters',
      `${imp}\u0001\u001b[31m red \u001b[0m\u007f\u0085\u0008 end\n\nnul\u0000here\u000b and a form\u000cfeed\n\n${exp('control-characters')}\n`,
      [`${imp}\u0001\u001b[31m red \u001b[0m\u007f\u0085\u0008 end`, 'nul\ufffdhere', exp('control-characters')],
    ),
  ];
}

/** Benign notes with every construct Markdown makes (the elements a page of notes may hold). */
export const CONTROL_NOTES = [
  '# Heading',
  '',
  '## Sub',
  '',
  '### Subsub',
  '',
  '#### Deep',
  '',
  'A paragraph with *emphasis*, **strong**, ~~struck~~, `code`, a [link](https://example.org/), a line\\',
  'break and a note.[^n]',
  '',
  '- one',
  '- two',
  '',
  '3. three',
  '4. four',
  '',
  '> quoted',
  '',
  '| left | middle | right |',
  '|:--|:-:|--:|',
  '| a | b | c |',
  '',
  '```',
  'code block',
  '```',
  '',
  '---',
  '',
  '[^n]: The note.',
  '',
].join('\n');

/** Names that are code if compiled: system, Cepheid host and supernova ids, the title and variant names. */
export function namePayloads(canaryDir: string): { ids: string[]; title: string; variants: string[]; canaries: string[] } {
  const c = (name: string) => join(canaryDir, name);
  return {
    ids: [
      "import fs from 'node:fs'",
      `export const ran = ${writes(c('name-export'))}`,
      `{${viaImport(c('name-expression'))}}`,
      `<Canary run={${viaImport(c('name-jsx'))}} />`,
      `<!-- --> {${viaImport(c('name-comment'))}}`,
      '$$\\href{javascript:alert(1)}{x}$$',
    ],
    title: `export const ran = ${writes(c('name-title'))}`,
    variants: [`export default ${writes(c('name-variant'))}`, `{${viaImport(c('name-variant-expression'))}}`],
    canaries: ['name-export', 'name-expression', 'name-jsx', 'name-comment', 'name-title', 'name-variant', 'name-variant-expression'].map(c),
  };
}
