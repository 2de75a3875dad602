/**
 * Bytes to text for every input file: UTF-8 only (a leading byte-order mark is
 * accepted and dropped), LF or CRLF line ends. Also the helpers that turn byte
 * offsets into 1-based line numbers as an editor shows them.
 */
import { createHash } from 'node:crypto';
import type { Problem } from './issues.ts';

const BOM = [0xef, 0xbb, 0xbf];

/** The bytes without a leading UTF-8 byte-order mark (a view, not a copy). */
export function stripBom(bytes: Uint8Array): Uint8Array {
  return bytes.length >= 3 && bytes[0] === BOM[0] && bytes[1] === BOM[1] && bytes[2] === BOM[2] ? bytes.subarray(3) : bytes;
}

/**
 * Decode UTF-8 strictly. On failure, the problem names the first line holding an
 * invalid byte sequence (each line is decoded on its own to find it).
 */
export function decodeUtf8(bytes: Uint8Array): { text: string } | { problem: Problem } {
  const body = stripBom(bytes);
  try {
    return { text: new TextDecoder('utf-8', { fatal: true, ignoreBOM: true }).decode(body) };
  } catch {
    const decoder = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });
    let start = 0;
    let line = 1;
    for (let i = 0; i <= body.length; i++) {
      if (i === body.length || body[i] === 0x0a) {
        try {
          decoder.decode(body.subarray(start, i));
        } catch {
          break;
        }
        start = i + 1;
        line++;
      }
    }
    const utf16 = bytes.length >= 2 && ((bytes[0] === 0xff && bytes[1] === 0xfe) || (bytes[0] === 0xfe && bytes[1] === 0xff));
    return {
      problem: {
        code: 'not-utf8',
        line,
        message: 'the file is not valid UTF-8 text',
        expected: 'UTF-8',
        found: utf16 ? 'UTF-16 (byte-order mark)' : 'bytes that are not UTF-8',
        hint: 'save the file as UTF-8',
      },
    };
  }
}

/** Byte offsets of every LF in the bytes, for offset -> line lookups. */
export function newlineOffsets(bytes: Uint8Array): number[] {
  const out: number[] = [];
  for (let i = 0; i < bytes.length; i++) if (bytes[i] === 0x0a) out.push(i);
  return out;
}

/** 1-based line of a byte offset, given the LF offsets (binary search). */
export function lineAtOffset(newlines: readonly number[], offset: number): number {
  let lo = 0;
  let hi = newlines.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (newlines[mid] < offset) lo = mid + 1;
    else hi = mid;
  }
  return lo + 1;
}

/** Hex SHA-256 of the file's bytes as stored (byte-order mark included). */
export function sha256Hex(bytes: Uint8Array): string {
  return createHash('sha256').update(bytes).digest('hex');
}

/**
 * C0 and C1 control characters and DEL. In an id, a name or a title they are a data error (often a
 * stray escape from another tool) and, printed, they would drive the reader's terminal.
 */
export const CONTROL_CHARACTER = /[\u0000-\u001f\u007f-\u009f]/;
