/**
 * A file as a sequence of blocks of complete lines, read with large reads into one reused buffer (no allocation per
 * read, no copy beyond moving the partial last line to the front). Each block is buf[0, end) and ends with '\n'
 * (one is supplied after a last line that lacks it). A block's bytes are valid until the next call to next().
 *
 * A line longer than `maxLine` bytes is not held: next() reports it once as { long: true } with its first bytes
 * in buf[0, end), then skips the rest of it.
 */
import { open, type FileHandle } from 'node:fs/promises';

export interface LineBlock {
  buf: Buffer;
  end: number;
  /** The block is the start of an over-long line (not a complete line). */
  long: boolean;
}

export class LineBlocks {
  private buf: Buffer;
  private total = 0; // bytes held in buf
  private used = 0; // bytes of buf handed out in the last block
  private eof = false;
  private skipping = false;

  private constructor(
    private readonly fh: FileHandle,
    private readonly readSize: number,
    private readonly maxLine: number,
  ) {
    this.buf = Buffer.allocUnsafe(readSize);
  }

  /** @param readSize bytes per read (the buffer grows only for long lines) @param maxLine longest line held whole */
  static async open(path: string, readSize = 1 << 20, maxLine = 1 << 20): Promise<LineBlocks> {
    return new LineBlocks(await open(path, 'r'), Math.max(1, readSize), maxLine);
  }

  async next(): Promise<LineBlock | null> {
    if (this.used > 0) {
      this.buf.copyWithin(0, this.used, this.total);
      this.total -= this.used;
      this.used = 0;
    }
    for (;;) {
      if (this.eof) {
        if (this.total === 0) return null;
        this.ensure(this.total + 1);
        this.buf[this.total++] = 10; // the last line had no line break
        this.used = this.total;
        return { buf: this.buf, end: this.total, long: false };
      }
      // read: the buffer holds at least readSize free bytes (it grows while a long line is being held)
      this.ensure(this.total + this.readSize);
      const start = this.total;
      const { bytesRead } = await this.fh.read(this.buf, start, this.buf.length - start, null);
      if (bytesRead === 0) {
        this.eof = true;
        if (this.skipping) {
          this.total = 0;
          this.skipping = false;
        }
        continue;
      }
      this.total += bytesRead;
      if (this.skipping) {
        const nl = this.buf.subarray(start, this.total).indexOf(10);
        if (nl < 0) {
          this.total = 0;
          continue;
        }
        this.used = start + nl + 1;
        this.buf.copyWithin(0, this.used, this.total);
        this.total -= this.used;
        this.used = 0;
        this.skipping = false;
        if (this.total === 0) continue;
      }
      const nl = this.buf.subarray(0, this.total).lastIndexOf(10);
      if (nl >= 0) {
        this.used = nl + 1;
        return { buf: this.buf, end: nl + 1, long: false };
      }
      if (this.total > this.maxLine) {
        // an over-long line: report its start, then drop it up to its line break
        this.skipping = true;
        this.used = this.total;
        return { buf: this.buf, end: this.total, long: true };
      }
    }
  }

  private ensure(n: number): void {
    if (n <= this.buf.length) return;
    const b = Buffer.allocUnsafe(Math.max(n, this.buf.length * 2));
    this.buf.copy(b, 0, 0, this.total);
    this.buf = b;
  }

  async close(): Promise<void> {
    await this.fh.close();
  }
}
