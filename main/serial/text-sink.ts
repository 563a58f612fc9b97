// A buffered text file for exports that grow with the capture (VCD): text is gathered in memory up to a
// block and written out, so memory stays flat and the file is complete when `close` returns.
import { closeSync, openSync, writeSync } from 'node:fs';

const BLOCK_CHARS = 1 << 20;

export type TextFileResult = { ok: true; file: TextFile } | { ok: false; error: string };

export class TextFile {
  private parts: string[] = [];
  private size = 0;
  failure: string | null = null;

  private constructor(
    readonly path: string,
    private fd: number | null,
  ) {}

  static create(path: string): TextFileResult {
    try {
      return { ok: true, file: new TextFile(path, openSync(path, 'w')) };
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      const why = code === 'ENOENT' ? 'its directory does not exist' : code === 'EACCES' ? 'permission denied' : code === 'EISDIR' ? 'it is a directory' : (e as Error).message;
      return { ok: false, error: `${path}: cannot write: ${why}` };
    }
  }

  write(text: string): void {
    if (!text || this.fd === null) return;
    this.parts.push(text);
    this.size += text.length;
    if (this.size >= BLOCK_CHARS) this.flush();
  }

  private flush(): void {
    if (this.fd === null || this.parts.length === 0) return;
    const text = this.parts.join('');
    this.parts = [];
    this.size = 0;
    try {
      writeSync(this.fd, text);
    } catch (e) {
      this.failure = `${this.path}: write failed: ${(e as Error).message}`;
      this.close();
    }
  }

  close(): void {
    if (this.fd === null) return;
    this.flush();
    try {
      if (this.fd !== null) closeSync(this.fd);
    } catch {
      // already closed
    }
    this.fd = null;
  }
}
