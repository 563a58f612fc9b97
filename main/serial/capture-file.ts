// Capture files on disk: a recorder that appends one checksummed record per arrival of data and hands it
// to the operating system at once (so a crash loses nothing already received), and a streaming reader.
import { closeSync, fdatasyncSync, openSync, readSync, writeSync } from 'node:fs';
import { encodeCaptureStart, encodeJsonRecord, encodeRecord, type CaptureHeader } from '../../core/capture/format';
import { CaptureReader, type CaptureReadSummary, type CaptureSink } from '../../core/capture/reader';

/** How often the recorder asks the disk to persist what it wrote (a power cut loses at most this much). */
const SYNC_INTERVAL_MS = 1000;

export type CaptureWriterResult = { ok: true; writer: CaptureWriter } | { ok: false; error: string };

export class CaptureWriter {
  private fd: number | null;
  private readonly t0 = performance.now();
  private lastSync = performance.now();
  private received = 0;
  private sent = 0;
  /** Set when a write failed; the recorder then stops writing and the caller reports it. */
  failure: string | null = null;

  private constructor(
    readonly path: string,
    fd: number,
  ) {
    this.fd = fd;
  }

  /** Create a new capture file; refuses to overwrite an existing one (it may hold a recording). */
  static create(path: string, header: CaptureHeader): CaptureWriterResult {
    let fd: number;
    try {
      fd = openSync(path, 'wx');
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      const why = code === 'EEXIST' ? 'the file exists (a capture is never overwritten; choose another name)' : code === 'ENOENT' ? 'its directory does not exist' : code === 'EACCES' ? 'permission denied' : (e as Error).message;
      return { ok: false, error: `${path}: cannot create the capture: ${why}` };
    }
    const w = new CaptureWriter(path, fd);
    w.write(encodeCaptureStart(header));
    if (w.failure) return { ok: false, error: w.failure };
    return { ok: true, writer: w };
  }

  private micros(): number {
    return Math.round((performance.now() - this.t0) * 1000);
  }

  /** Bytes from the board, as they arrived. */
  receivedBytes(bytes: Uint8Array): void {
    if (bytes.length === 0) return;
    this.received += bytes.length;
    this.write(encodeRecord('received', this.micros(), bytes));
  }

  /** Bytes the host sent to the board. */
  sentBytes(bytes: Uint8Array): void {
    if (bytes.length === 0) return;
    this.sent += bytes.length;
    this.write(encodeRecord('sent', this.micros(), bytes));
  }

  note(event: string, message: string): void {
    this.write(encodeJsonRecord('note', this.micros(), { event, message }));
  }

  /** Write the end record and close; safe to call more than once. */
  close(reason: string): void {
    if (this.fd === null) return;
    this.write(encodeJsonRecord('end', this.micros(), { reason, receivedBytes: this.received, sentBytes: this.sent }));
    try {
      if (this.fd !== null) fdatasyncSync(this.fd);
    } catch {
      // Nothing more to do: the data is with the operating system.
    }
    try {
      if (this.fd !== null) closeSync(this.fd);
    } catch {
      // Already closed by a failure path.
    }
    this.fd = null;
  }

  get bytesReceived(): number {
    return this.received;
  }

  private write(bytes: Uint8Array): void {
    if (this.fd === null || this.failure) return;
    try {
      let at = 0;
      while (at < bytes.length) at += writeSync(this.fd, bytes, at, bytes.length - at);
      const now = performance.now();
      if (now - this.lastSync >= SYNC_INTERVAL_MS) {
        fdatasyncSync(this.fd);
        this.lastSync = now;
      }
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      this.failure = `${this.path}: writing the capture failed (${code === 'ENOSPC' ? 'the disk is full' : (e as Error).message}); recording stopped, what was written before is readable`;
      try {
        closeSync(this.fd);
      } catch {
        // ignore
      }
      this.fd = null;
    }
  }
}

/** Stream a capture file through a reader in blocks (memory stays flat whatever the file size). */
export function readCaptureFile(path: string, sink: CaptureSink, blockBytes = 1 << 20): { ok: true; summary: CaptureReadSummary } | { ok: false; error: string } {
  let fd: number;
  try {
    fd = openSync(path, 'r');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    const why = code === 'ENOENT' ? 'no such file' : code === 'EISDIR' ? 'is a directory' : code === 'EACCES' ? 'permission denied' : (e as Error).message;
    return { ok: false, error: `${path}: cannot read the capture: ${why}` };
  }
  const reader = new CaptureReader(sink);
  const block = new Uint8Array(blockBytes);
  try {
    for (;;) {
      const n = readSync(fd, block, 0, block.length, null);
      if (n <= 0) break;
      reader.push(block.subarray(0, n));
    }
  } catch (e) {
    reader.end();
    return { ok: false, error: `${path}: reading the capture failed: ${(e as Error).message}` };
  } finally {
    closeSync(fd);
  }
  return { ok: true, summary: reader.end() };
}
