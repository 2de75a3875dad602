/**
 * A strict PNG reader for tests: checks the signature, every chunk's CRC-32,
 * the IHDR fields, inflates the IDAT stream and checks that it holds exactly
 * one filter byte plus one row of pixels per scanline, each filter type valid.
 * Format from the PNG specification (ISO/IEC 15948:2004, W3C PNG 2nd edition):
 * sections 5.2 (signature), 5.3 (chunk layout and CRC), 11.2.2 (IHDR), 9.2 (filter types).
 */
import { inflateSync } from 'node:zlib';

const SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];

const CRC_TABLE = (() => {
  const t = new Uint32Array(256);
  for (let n = 0; n < 256; n++) {
    let c = n;
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
    t[n] = c >>> 0;
  }
  return t;
})();

function crc32(bytes: Uint8Array): number {
  let c = 0xffffffff;
  for (const b of bytes) c = CRC_TABLE[(c ^ b) & 0xff]! ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}

/** Channels per pixel by colour type (spec table 11.1). */
const CHANNELS: Record<number, number> = { 0: 1, 2: 3, 3: 1, 4: 2, 6: 4 };

export interface DecodedPng {
  width: number;
  height: number;
  bitDepth: number;
  colorType: number;
}

export function decodePng(buf: Uint8Array): DecodedPng {
  if (buf.length < 8 || SIGNATURE.some((b, i) => buf[i] !== b)) throw new Error('bad PNG signature');
  const view = new DataView(buf.buffer, buf.byteOffset, buf.byteLength);
  let pos = 8;
  let header: DecodedPng | null = null;
  let interlace = 0;
  const idat: Uint8Array[] = [];
  let sawEnd = false;
  while (pos < buf.length) {
    if (pos + 12 > buf.length) throw new Error('truncated chunk');
    const length = view.getUint32(pos);
    const typeAndData = buf.subarray(pos + 4, pos + 8 + length);
    const type = String.fromCharCode(...typeAndData.subarray(0, 4));
    const crc = view.getUint32(pos + 8 + length);
    if (crc32(typeAndData) !== crc) throw new Error(`bad CRC in chunk ${type}`);
    const data = typeAndData.subarray(4);
    if (header === null && type !== 'IHDR') throw new Error('first chunk is not IHDR');
    if (type === 'IHDR') {
      const d = new DataView(data.buffer, data.byteOffset, data.byteLength);
      header = { width: d.getUint32(0), height: d.getUint32(4), bitDepth: data[8]!, colorType: data[9]! };
      interlace = data[12]!;
    } else if (type === 'IDAT') idat.push(data);
    else if (type === 'IEND') {
      sawEnd = true;
      break;
    }
    pos += 12 + length;
  }
  if (!header || !sawEnd) throw new Error('missing IHDR or IEND');
  if (header.width === 0 || header.height === 0) throw new Error('empty image');
  if (interlace !== 0) throw new Error('interlaced PNG not expected');
  const channels = CHANNELS[header.colorType];
  if (channels === undefined) throw new Error(`bad colour type ${header.colorType}`);
  const raw = inflateSync(Buffer.concat(idat));
  const rowBytes = Math.ceil((header.width * channels * header.bitDepth) / 8);
  if (raw.length !== header.height * (rowBytes + 1)) throw new Error(`pixel data has ${raw.length} bytes, expected ${header.height * (rowBytes + 1)}`);
  for (let y = 0; y < header.height; y++) {
    if (raw[y * (rowBytes + 1)]! > 4) throw new Error(`bad filter type on row ${y}`);
  }
  return header;
}
