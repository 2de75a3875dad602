/**
 * Figures you can hover (progressive enhancement). The static SVG stays as it is (it prints and
 * works without JavaScript; its text alternative is on the page). Where a figure's points carry
 * `data-row` (the row of the figure's CSV each symbol draws, written by src/report), this script
 * reads that CSV from the site itself and, on hover or keyboard focus, shows the object's id, its
 * system and its values; a click (or Enter) opens the object's row on its system's page.
 * Keyboard: the figure's points form one tab stop; arrow keys move from point to point in the
 * order of the horizontal axis, Enter opens, Escape closes. No request leaves the site.
 */

type Row = Record<string, string>;

/** RFC 4180 CSV, as src/io/writeEcsv.ts writes it (quotes doubled inside quoted fields). */
export function parseCsv(text: string): Row[] {
  const records: string[][] = [];
  let field = '';
  let record: string[] = [];
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const ch = text[i]!;
    if (quoted) {
      if (ch === '"' && text[i + 1] === '"') {
        field += '"';
        i += 1;
      } else if (ch === '"') quoted = false;
      else field += ch;
    } else if (ch === '"') quoted = true;
    else if (ch === ',') {
      record.push(field);
      field = '';
    } else if (ch === '\n' || ch === '\r') {
      if (ch === '\r' && text[i + 1] === '\n') i += 1;
      record.push(field);
      records.push(record);
      record = [];
      field = '';
    } else field += ch;
  }
  if (field !== '' || record.length > 0) {
    record.push(field);
    records.push(record);
  }
  const [head, ...body] = records;
  if (!head) return [];
  return body.map((r) => Object.fromEntries(head.map((h, k) => [h, r[k] ?? ''])));
}

const ID_COLUMNS = ['star', 'sn', 'system'];
const HIDDEN = new Set(['page', 'star', 'sn']);

function label(row: Row): { id: string; lines: string[] } {
  const idCol = ID_COLUMNS.find((c) => row[c] !== undefined && row[c] !== '') ?? Object.keys(row)[0]!;
  const lines = Object.entries(row)
    .filter(([k, v]) => !HIDDEN.has(k) && k !== idCol && v !== '')
    .map(([k, v]) => `${k.replace(/_/g, ' ')}: ${/^-?\d+\.\d{5,}/.test(v) ? Number(v).toPrecision(5) : v}`);
  return { id: row[idCol] ?? '', lines };
}

function centre(el: Element): { x: number; y: number } | null {
  const cx = el.getAttribute('cx');
  const cy = el.getAttribute('cy');
  if (cx !== null && cy !== null) return { x: Number(cx), y: Number(cy) };
  const m = /translate\(\s*([-\d.e]+)[ ,]+([-\d.e]+)\s*\)/.exec(el.getAttribute('transform') ?? '');
  return m ? { x: Number(m[1]), y: Number(m[2]) } : null;
}

async function enhance(fig: HTMLElement): Promise<void> {
  const box = fig.querySelector<HTMLElement>('.figure-image');
  const svg = box?.querySelector<SVGSVGElement>('svg[data-hover]');
  const csvUrl = fig.dataset.hoverCsv;
  const base = fig.dataset.hoverBase ?? '/';
  if (!box || !svg || !csvUrl) return;
  let rows: Row[];
  try {
    const res = await fetch(csvUrl);
    if (!res.ok) return;
    rows = parseCsv(await res.text());
  } catch {
    return; // the static figure stays as it is
  }
  const points = Array.from(svg.querySelectorAll<SVGElement>('[data-row]'))
    .map((el) => ({ el, at: centre(el), row: rows[Number(el.dataset.row)] }))
    .filter((p): p is { el: SVGElement; at: { x: number; y: number }; row: Row } => p.at !== null && p.row !== undefined)
    .sort((a, b) => a.at.x - b.at.x || a.at.y - b.at.y);
  if (points.length === 0) return;

  const tip = document.createElement('div');
  tip.className = 'hover-tip';
  tip.setAttribute('role', 'status');
  tip.setAttribute('aria-live', 'polite');
  tip.hidden = true;
  box.append(tip);
  box.classList.add('hoverable');
  box.tabIndex = 0;
  box.setAttribute('role', 'group');
  box.setAttribute(
    'aria-label',
    `${svg.getAttribute('aria-label') ?? 'Figure'}: ${points.length} points; use the arrow keys to read them one by one and Enter to open one`,
  );

  let current = -1;
  const show = (i: number) => {
    if (current >= 0) points[current]!.el.classList.remove('hover-active');
    current = i;
    const p = points[i]!;
    p.el.classList.add('hover-active');
    const { id, lines } = label(p.row);
    tip.replaceChildren();
    const strong = document.createElement('strong');
    strong.textContent = id;
    tip.append(strong);
    for (const l of lines) {
      const div = document.createElement('div');
      div.textContent = l;
      tip.append(div);
    }
    if (p.row.page) {
      const hint = document.createElement('div');
      hint.className = 'hover-hint';
      hint.textContent = 'click or Enter: open its page';
      tip.append(hint);
    }
    tip.hidden = false;
    const m = svg.getScreenCTM();
    const r = box.getBoundingClientRect();
    if (m) {
      const px = m.a * p.at.x + m.c * p.at.y + m.e - r.left;
      const py = m.b * p.at.x + m.d * p.at.y + m.f - r.top;
      tip.style.left = `${Math.min(px + 12, r.width - 200)}px`;
      tip.style.top = `${py + 12}px`;
    }
  };
  const hide = () => {
    if (current >= 0) points[current]!.el.classList.remove('hover-active');
    current = -1;
    tip.hidden = true;
  };
  const open = () => {
    const page = current >= 0 ? points[current]!.row.page : '';
    if (page) window.location.href = `${base}${page.replace(/^\/+/, '')}`;
  };
  const nearest = (ev: PointerEvent | MouseEvent): number => {
    const m = svg.getScreenCTM();
    if (!m) return -1;
    const inv = m.inverse();
    const x = inv.a * ev.clientX + inv.c * ev.clientY + inv.e;
    const y = inv.b * ev.clientX + inv.d * ev.clientY + inv.f;
    let best = -1;
    let bestD = 12 * 12;
    points.forEach((p, i) => {
      const d = (p.at.x - x) ** 2 + (p.at.y - y) ** 2;
      if (d <= bestD) {
        bestD = d;
        best = i;
      }
    });
    return best;
  };
  svg.addEventListener('pointermove', (ev) => {
    const i = nearest(ev);
    if (i >= 0) {
      if (i !== current) show(i);
      svg.style.cursor = points[i]!.row.page ? 'pointer' : 'default';
    } else if (document.activeElement !== box) hide();
  });
  svg.addEventListener('pointerleave', () => {
    if (document.activeElement !== box) hide();
  });
  svg.addEventListener('click', (ev) => {
    const i = nearest(ev);
    if (i >= 0) {
      show(i);
      open();
    }
  });
  box.addEventListener('focus', () => show(current >= 0 ? current : 0));
  box.addEventListener('blur', hide);
  box.addEventListener('keydown', (ev) => {
    const step = { ArrowRight: 1, ArrowDown: 1, ArrowLeft: -1, ArrowUp: -1 }[ev.key];
    if (step !== undefined) {
      ev.preventDefault();
      show(Math.min(points.length - 1, Math.max(0, (current < 0 ? 0 : current) + step)));
    } else if (ev.key === 'Home' || ev.key === 'End') {
      ev.preventDefault();
      show(ev.key === 'Home' ? 0 : points.length - 1);
    } else if (ev.key === 'Enter') {
      ev.preventDefault();
      open();
    } else if (ev.key === 'Escape') hide();
  });
}

for (const fig of Array.from(document.querySelectorAll<HTMLElement>('figure[data-hover-csv]'))) void enhance(fig);
