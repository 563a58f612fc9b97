// A small ZIP writer (stored entries, no compression) so the browser can download every generated file in
// one archive without any package; names are UTF-8, sizes stay well below the 4 GiB limit of plain ZIP.
import { crc32 } from '../capture/crc32';

export interface ZipEntry {
  name: string;
  data: Uint8Array;
}

/** MS-DOS date and time fields, the resolution ZIP headers store (two seconds). */
export function dosDateTime(d: Date): { date: number; time: number } {
  const year = Math.min(2107, Math.max(1980, d.getFullYear()));
  return {
    date: ((year - 1980) << 9) | ((d.getMonth() + 1) << 5) | d.getDate(),
    time: (d.getHours() << 11) | (d.getMinutes() << 5) | (d.getSeconds() >> 1),
  };
}

const LOCAL_HEADER = 30;
const CENTRAL_HEADER = 46;
const END_RECORD = 22;
/** General purpose flag bit 11: file names are UTF-8. */
const UTF8_NAMES = 0x0800;

/** The archive's bytes; refuses names that would unpack outside the target folder. */
export function zipStore(entries: readonly ZipEntry[], when: Date = new Date()): Uint8Array {
  const utf8 = new TextEncoder();
  const { date, time } = dosDateTime(when);
  const names = entries.map((e) => {
    if (!e.name || e.name.startsWith('/') || e.name.split(/[\\/]/).includes('..')) throw new Error(`zip: '${e.name}' is not a relative file name`);
    return utf8.encode(e.name);
  });
  const crcs = entries.map((e) => crc32(e.data));
  const localSize = entries.reduce((a, e, i) => a + LOCAL_HEADER + names[i].length + e.data.length, 0);
  const centralSize = entries.reduce((a, _e, i) => a + CENTRAL_HEADER + names[i].length, 0);
  const out = new Uint8Array(localSize + centralSize + END_RECORD);
  const v = new DataView(out.buffer);
  let at = 0;
  const offsets: number[] = [];
  entries.forEach((e, i) => {
    offsets.push(at);
    v.setUint32(at, 0x04034b50, true);
    v.setUint16(at + 4, 20, true);
    v.setUint16(at + 6, UTF8_NAMES, true);
    v.setUint16(at + 8, 0, true);
    v.setUint16(at + 10, time, true);
    v.setUint16(at + 12, date, true);
    v.setUint32(at + 14, crcs[i], true);
    v.setUint32(at + 18, e.data.length, true);
    v.setUint32(at + 22, e.data.length, true);
    v.setUint16(at + 26, names[i].length, true);
    v.setUint16(at + 28, 0, true);
    out.set(names[i], at + LOCAL_HEADER);
    out.set(e.data, at + LOCAL_HEADER + names[i].length);
    at += LOCAL_HEADER + names[i].length + e.data.length;
  });
  const centralStart = at;
  entries.forEach((e, i) => {
    v.setUint32(at, 0x02014b50, true);
    v.setUint16(at + 4, 20, true);
    v.setUint16(at + 6, 20, true);
    v.setUint16(at + 8, UTF8_NAMES, true);
    v.setUint16(at + 10, 0, true);
    v.setUint16(at + 12, time, true);
    v.setUint16(at + 14, date, true);
    v.setUint32(at + 16, crcs[i], true);
    v.setUint32(at + 20, e.data.length, true);
    v.setUint32(at + 24, e.data.length, true);
    v.setUint16(at + 28, names[i].length, true);
    // Extra field, comment, disk number, internal and external attributes: all zero.
    v.setUint32(at + 42, offsets[i], true);
    out.set(names[i], at + CENTRAL_HEADER);
    at += CENTRAL_HEADER + names[i].length;
  });
  v.setUint32(at, 0x06054b50, true);
  v.setUint16(at + 8, entries.length, true);
  v.setUint16(at + 10, entries.length, true);
  v.setUint32(at + 12, at - centralStart, true);
  v.setUint32(at + 16, centralStart, true);
  return out;
}
