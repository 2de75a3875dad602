/**
 * Sortable tables (progressive enhancement): in a table marked data-sortable, each column
 * heading becomes a button that sorts the rows by that column (numbers by value, text by
 * collation), again to reverse. Without JavaScript the table stays in the order the report wrote.
 */
function key(cell: Element | undefined): number | string {
  const t = (cell?.textContent ?? '').trim();
  const m = /^[+\u2212-]?\d+(?:[.,]\d+)?(?:e[+\u2212-]?\d+)?/i.exec(t.replace(/\u2009/g, ''));
  return m ? Number(m[0].replace(/\u2212/g, '-').replace(',', '.')) : t.toLowerCase();
}

for (const table of Array.from(document.querySelectorAll<HTMLTableElement>('table[data-sortable]'))) {
  const body = table.tBodies[0];
  if (!body) continue;
  table.closest('.table-block')?.querySelector<HTMLElement>('.sort-hint')?.removeAttribute('hidden');
  const heads = Array.from(table.tHead?.rows[0]?.cells ?? []);
  heads.forEach((th, col) => {
    const button = document.createElement('button');
    button.type = 'button';
    button.className = 'sort-button';
    button.append(...Array.from(th.childNodes));
    th.append(button);
    th.setAttribute('aria-sort', 'none');
    button.addEventListener('click', () => {
      const ascending = th.getAttribute('aria-sort') !== 'ascending';
      for (const h of heads) h.setAttribute('aria-sort', 'none');
      th.setAttribute('aria-sort', ascending ? 'ascending' : 'descending');
      const rows = Array.from(body.rows);
      rows.sort((a, b) => {
        const x = key(a.cells[col]);
        const y = key(b.cells[col]);
        const c = typeof x === 'number' && typeof y === 'number' ? x - y : typeof x === 'number' ? -1 : typeof y === 'number' ? 1 : x.localeCompare(y);
        return ascending ? c : -c;
      });
      body.append(...rows);
    });
  });
}
