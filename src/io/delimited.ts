/**
 * Delimited text (RFC 4180 CSV, and the body of an ECSV file) to records with
 * their line numbers. Parsing is csv-parse's; line numbers are ours: csv-parse
 * reports the byte offset where each record ends, and a record begins at the
 * first byte after the previous one's end that is not a line break. Counting LF
 * bytes before that offset gives the line an editor shows, also after quoted
 * fields that span lines and with CRLF line ends.
 */
import { parse, type CastingContext } from 'csv-parse/sync';
import type { Problem } from './issues.ts';
import { lineAtOffset, newlineOffsets } from './text.ts';

export interface DelimitedRecord {
  /** 1-based line (after adding the caller's offset) where the record begins. */
  line: number;
  /** Cells, trimmed. */
  cells: string[];
}

interface Cell {
  value: string;
  quoted: boolean;
}

const QUOTE_MESSAGES: Record<string, { message: string; expected: string; found: string }> = {
  CSV_QUOTE_NOT_CLOSED: {
    message: 'a quoted field is never closed',
    expected: 'a closing double quote',
    found: 'the end of the file',
  },
  INVALID_OPENING_QUOTE: {
    message: 'a double quote inside a field that does not start with one',
    expected: 'a field quoted as a whole, with inner quotes doubled ("")',
    found: 'a stray double quote',
  },
  CSV_INVALID_CLOSING_QUOTE: {
    message: 'text after the closing quote of a field',
    expected: 'a delimiter or line end after the closing quote',
    found: 'more text',
  },
};

const HASH = 0x23;
const QUOTE = 0x22;
const LF = 0x0a;
const CR = 0x0d;

/**
 * Split delimited bytes (UTF-8, no byte-order mark) into records.
 * With a space delimiter, runs of spaces separate fields (as ECSV readers do),
 * so an empty value must be written as "". Blank lines are skipped.
 * With `comments` (ECSV bodies), a line starting with '#' is a comment, as in
 * astropy's ECSV reader; plain CSV has no comments (RFC 4180), so there a '#'
 * is data. Unquoted cells are trimmed; quoted cells are kept as written.
 * `lineOffset` is added to every line (the ECSV header lines above the body).
 * Records read before a quoting error are returned with the problem.
 */
export function parseDelimited(
  bytes: Uint8Array,
  delimiter: ',' | ' ',
  lineOffset: number,
  comments = false,
): { records: DelimitedRecord[]; problem?: Problem } {
  const newlines = newlineOffsets(bytes);
  const startLine = (endOfPrevious: number): number => {
    let start = endOfPrevious;
    for (;;) {
      while (start < bytes.length && (bytes[start] === LF || bytes[start] === CR)) start++;
      if (!comments || bytes[start] !== HASH) break;
      const next = bytes.indexOf(LF, start);
      if (next < 0) break;
      start = next + 1;
    }
    return lineAtOffset(newlines, start) + lineOffset;
  };
  const records: DelimitedRecord[] = [];
  let previousEnd = 0;
  // Whether a cell was quoted matters (a quoted "" is a value, quoted text is kept as written), and
  // csv-parse tells it only to a `cast` function, building a context object for every cell: at
  // survey scale (hundreds of thousands of cells) that was most of the reading time. Without a
  // double quote anywhere in the bytes no cell can be quoted, so the cells are read as plain
  // strings (the same strings `cast` would receive) and marked unquoted.
  const anyQuote = bytes.indexOf(QUOTE) >= 0;
  try {
    parse(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength), {
      delimiter,
      relax_column_count: true,
      skip_empty_lines: true,
      trim: delimiter === ',',
      ...(comments ? { comment: '#', comment_no_infix: true } : {}),
      ...(anyQuote ? { cast: (value: string, context: CastingContext): Cell => ({ value, quoted: context.quoting }) } : {}),
      // With `cast`, each cell is a Cell (csv-parse's types still say string); without it, a string.
      on_record: (cells: string[], context) => {
        const line = startLine(previousEnd);
        previousEnd = context.bytes;
        if (!anyQuote) {
          // The unquoted case of the rule below, without a Cell per cell.
          const kept = delimiter === ' ' ? cells.filter((c) => c !== '') : cells;
          const blank = kept.length === 0 || (kept.length === 1 && kept[0].trim() === '');
          if (!blank) records.push({ line, cells: kept.map((c) => c.trim()) });
          return null;
        }
        const record = cells as unknown as Cell[];
        const kept = delimiter === ' ' ? record.filter((c) => c.quoted || c.value !== '') : record;
        const blank = kept.length === 0 || (kept.length === 1 && !kept[0].quoted && kept[0].value.trim() === '');
        if (!blank) records.push({ line, cells: kept.map((c) => (c.quoted ? c.value : c.value.trim())) });
        return null;
      },
    });
  } catch (err) {
    const code = (err as { code?: string }).code ?? '';
    const known = QUOTE_MESSAGES[code];
    const line = startLine(previousEnd);
    return {
      records,
      problem: {
        code: 'bad-quoting',
        line,
        message: `${known?.message ?? (err as Error).message} (in the row starting at this line)`,
        expected: known?.expected,
        found: known?.found,
        hint: 'rows after this one were not read',
      },
    };
  }
  return { records };
}
